// Figures of allocsim, drawn with gnuplot through gnuplot-iostream.
//
// Every figure function takes plain data (matrices, points, labels), never a
// results file, so the command line, the demo and the tests call them alike.
// Each writes one image "<stem>.<png|svg|pdf>" (or, with
// FigureOptions::script_only, the gnuplot script "<stem>.gp" that would draw
// it) and returns the path it wrote.
//
// Guarantees:
// * Text given in the data structs (titles, series and axis labels, agent and
//   partner names) is plain text: it is escaped (escape_gnuplot_text) and
//   drawn literally, never run as a gnuplot command nor read as markup.
// * Files appear complete or not at all: gnuplot draws to a temporary name
//   beside the target, renamed onto it only after gnuplot exits with status 0
//   and the image is non-empty.
// * The script is a pure function of the data and options (numbers are
//   written with 18 significant digits, no time, no process id), so two
//   generations for the same input are byte-identical.
// * Data go inline in the script (gnuplot-iostream send1d); the styling of
//   plots/style.gp is embedded at build time, so the script stands alone.
//
// Failures: InputError when the output cannot be written, when gnuplot
// cannot be started or reports an error (its messages go to stderr), or when
// the data cannot make the figure (no panel, shapes that disagree).
#pragma once

#include <limits>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim::plots {

enum class ImageFormat { png, svg, pdf };

std::string to_string(ImageFormat format);  // "png", "svg", "pdf"
ImageFormat image_format_from_string(
    const std::string& text);                    // throws InputError("--format", ...)
std::string file_extension(ImageFormat format);  // without the dot
std::vector<std::string> image_format_words();   // "png", "svg", "pdf"

struct FigureOptions {
  ImageFormat format = ImageFormat::png;  // png: pngcairo; svg: svg; pdf: pdfcairo
  int width_pixels = 0;   // 0: the figure's own default (1000, or wider for side-by-side panels);
                          // PDF at 100 px per inch
  int height_pixels = 0;  // 0: the figure's own default (700, or 600 for heatmaps)
  int font_size_points = 13;  // base font; titles are 2 points larger; in [6, 40]
  bool script_only =
      false;  // write "<stem>.gp" (drawing to "<stem>.<format>") instead of running gnuplot
  std::string gnuplot_program;  // empty: the gnuplot found at build time, else "gnuplot" on PATH

  // Throws InputError naming the wrong field.
  void validate() const;
};

// Escapes plain text for a single-quoted gnuplot string in enhanced-text
// mode, without the enclosing quotes: ' becomes '', a backslash and each of
// ^ _ @ & ~ { } get a backslash in front (enhanced-text escapes), and
// newlines, tabs and other control characters become spaces (a newline would
// end the command). Single quotes also stop gnuplot's backquote (shell)
// substitution, so nothing in `text` can run a command. Text that starts
// with ' gets a zero-width "&{}" in front (gnuplot would read a leading ''
// as an empty string followed by stray text).
std::string escape_gnuplot_text(const std::string& text);

// A complete gnuplot string literal: "'" + escape_gnuplot_text(text) + "'".
std::string quote_gnuplot_text(const std::string& text);

// A tic label literal: gnuplot reads an explicit tic label as a format of
// the tic's position, so '%' is doubled besides the escaping above.
std::string quote_gnuplot_tic_label(const std::string& text);

// A display order of rows and columns: position k shows rows[k] (columns[k]).
struct Ordering {
  std::vector<long> rows, columns;
};

// Degree ordering of a matrix: rows (columns) by decreasing number of cells
// > 0, ties by decreasing sum, then by index. On a nested matrix it puts the
// filled cells in the upper-left triangle.
Ordering degree_ordering(const Matrix& values);

// ---------------------------------------------------------------------------
// Allocation heatmaps, side by side on one shared colour scale.

struct HeatmapPanel {
  std::string title;  // e.g. "emergent allocation"
  Matrix values;  // n x m, >= 0 (counts or shares; each panel is shown as shares of its own total)
};

struct AllocationHeatmaps {
  std::string title;
  std::vector<HeatmapPanel> panels;      // 1 to 4 panels of the same shape
  Ordering ordering;                     // empty: degree_ordering(panels[0].values)
  std::string ordering_name = "degree";  // named in the axis labels ("agents i, by degree")
  std::vector<std::string> row_labels,
      column_labels;  // optional; drawn as tick labels up to 40 of them
  bool log_colour_scale =
      true;  // log10 colours from smallest_share * max to max; smaller cells are white
  double smallest_share = 1e-4;  // in (0, 1); of the largest share over all panels
  std::string colour_label;      // empty: "share of all units ..."
  bool colour_bar = true;        // false: no colour bar (e.g. a 0/1 matrix drawn in one colour)
};

// Draws the panels left to right with one colour bar (share of all units).
// `colour_label`, when given, replaces the colour bar's label (e.g. for 0/1 links).
std::string draw_allocation_heatmaps(const AllocationHeatmaps& figure, const std::string& stem,
                                     const FigureOptions& options = {});

// ---------------------------------------------------------------------------
// A structure metric of an observed matrix against its null ensemble: a
// histogram of the null values with the observed value marked, and its
// z-score and empirical p-values in the panel title. One panel per metric.

struct NullDistribution {
  std::string metric;          // e.g. "NODF"
  std::string model;           // e.g. "curveball"
  std::vector<double> values;  // the metric on each null matrix (non-finite ones are left out)
  double observed = 0;
  double z_score = 0;  // NaN when the null values do not vary
  double p_upper = 0, p_two_sided = 0;
};

struct NullHistograms {
  std::string title;
  std::vector<NullDistribution> panels;  // 1 or 2
};

std::string draw_null_histograms(const NullHistograms& figure, const std::string& stem,
                                 const FigureOptions& options = {});

// ---------------------------------------------------------------------------
// Points with optional intervals, used by the figures against temperature.

constexpr double kNoValue = std::numeric_limits<double>::quiet_NaN();

struct Point {
  double x = 0;
  double y = 0;
  double low = kNoValue;  // interval, NaN when none; high may be +inf (drawn to the top edge)
  double high = kNoValue;
  int level = 0;  // index into the figure's Factor::levels (0 when there is no factor)
};

// A factor (a swept key) that splits the runs of a figure against
// temperature: one series (colour and marker) per level, or with `panels`
// one panel per level on shared axes. No levels: every point is one series.
// Up to 8 levels get their own style (Okabe-Ito colours, distinct markers);
// more repeat them.
struct Factor {
  std::string key;                  // plain text, e.g. "scenario.capacities"; the legend title
  std::vector<std::string> levels;  // plain text, legend order, e.g. "uniform", "0.25"
  bool panels = false;

  bool split() const { return levels.size() > 1; }
};

// Null-model ensemble at one x: its mean and 95% band (e.g. 2.5% and 97.5%
// quantiles, or mean -/+ 1.96 sd).
struct NullBandPoint {
  double x = 0;
  double mean = 0;
  double low = 0;
  double high = 0;
  int level = 0;  // as Point::level
};

// A structure metric (NODF, WNODF) of the emergent allocations against the
// choice temperature: one point per run, a line through the mean at each
// temperature, the null mean (dashed) and its 95% band (shaded). With a
// factor drawn as series, each level's null mean is a dashed line in the
// level's colour and the bands are left out (they would cover each other);
// in panels each panel has its level's band.
struct MetricAgainstTemperature {
  std::string title;
  std::string metric_name;               // plain text, e.g. "NODF"; the y label
  std::vector<Point> runs;               // x = choice temperature T (> 0), y = metric
  std::vector<NullBandPoint> null_band;  // may be empty; several at one x are averaged
  std::string null_name = "null model";  // e.g. "fixed-marginal null"
  Factor factor = {};
};
std::string draw_metric_against_temperature(const MetricAgainstTemperature& figure,
                                            const std::string& stem,
                                            const FigureOptions& options = {});

// The z-score of a structure metric against its null ensemble, per run,
// against the choice temperature: points, a line through the mean at each
// temperature, and the shaded band |z| <= threshold (as likely under the
// null). Above the band: more than the null; below: less.
struct ZScoresAgainstTemperature {
  std::string title;
  std::string metric_name;  // plain text, e.g. "NODF"
  std::string null_name;    // plain text, e.g. "curveball null model"
  std::vector<Point> runs;  // x = T, y = z-score
  double threshold = 2;     // > 0
  Factor factor = {};
};
std::string draw_z_scores_against_temperature(const ZScoresAgainstTemperature& figure,
                                              const std::string& stem,
                                              const FigureOptions& options = {});

// The answer of `allocsim trend` per level: the slope of a metric against
// log10 x with its interval (a horizontal bar per level, the level's colour
// and marker; a vertical line at 0), with Spearman's rho, its p-value and
// the runs above and below the null written beside each bar.
struct TrendRow {
  int level = 0;  // index into factor.levels (0 without a factor)
  long runs = 0;
  double rho = kNoValue, p_value = kNoValue;
  double slope = kNoValue, low = kNoValue, high = kNoValue;  // NaN: not measurable
  long with_z = 0, above = 0, below = 0;                     // with_z = 0: no z counts
};
struct TrendSummary {
  std::string title;
  std::string metric_name;  // plain text, e.g. "nodf_z_score"
  std::string x_name;       // plain text, e.g. "dynamics.temperature"
  double confidence = 0.95;
  double z_threshold = 2;      // |z| above it counted as above / below the null
  std::vector<TrendRow> rows;  // top to bottom
  Factor factor = {};          // panels are not used: one row per level
};
std::string draw_trend_summary(const TrendSummary& figure, const std::string& stem,
                               const FigureOptions& options = {});

// Estimated transport temperature against the true choice temperature, log
// axes (linear when the values span less than a factor 10), with interval
// bars and the identity line. Points with an estimate
// that is not a positive finite number (boundary estimates: 0 or infinity)
// cannot sit on log axes; they are counted in a note on the figure.
struct TemperatureRecovery {
  std::string title;
  std::vector<Point> runs;  // x = true T, y = estimated epsilon, low/high = its interval
  std::string interval_name = "95% interval";
  Factor factor = {};  // series: the levels' points are shifted slightly apart along x
};
std::string draw_temperature_recovery(const TemperatureRecovery& figure, const std::string& stem,
                                      const FigureOptions& options = {});

// Distance from the emergent allocation to the entropic coupling (at the
// estimated epsilon) and to the exact coupling, against the temperature.
// The y axis is logarithmic when every distance is positive. With a factor
// drawn as series: two panels (to the entropic, to the exact coupling), one
// series per level in each.
struct DistanceAgainstTemperature {
  std::string title;
  std::string distance_name = "KL divergence";  // plain text; the y label
  std::vector<Point> to_entropic;               // x = T
  std::vector<Point> to_exact;                  // x = T
  Factor factor = {};
};
std::string draw_distance_against_temperature(const DistanceAgainstTemperature& figure,
                                              const std::string& stem,
                                              const FigureOptions& options = {});

// Price and marginal-error trajectories of one run over its rounds: the top
// panel shows one price line per partner (absent when prices is empty), the
// bottom panel the L1 marginal errors of each snapshot window (log y).
struct Trajectories {
  std::string title;
  std::vector<double> rounds;               // round at the end of each snapshot window, k values
  std::vector<std::vector<double>> prices;  // per partner: k prices; may be empty
  std::vector<std::string> partner_labels;  // optional; named in the legend up to 8 partners
  std::vector<double> row_error;            // k values of ||P 1 - r||_1 (shares); may be empty
  std::vector<double> column_error;         // k values of ||P^T 1 - c||_1 (shares); may be empty
};
std::string draw_trajectories(const Trajectories& figure, const std::string& stem,
                              const FigureOptions& options = {});

// An estimator's score card on a blind benchmark set (`allocsim score`,
// drawn by `allocsim plot scores.h5`), four panels: the estimate against the
// truth (log axes, identity line); the ratio estimate / truth (relative error
// + 1; 1 = exact) against the truth and against the units (log axes); and
// the share of intervals that cover the truth per quintile band of the truth
// and of the units, against the nominal level. One point series per
// `series` label (e.g. the source; up to 8 styles, then they repeat).
// Unanswered cases (NaN estimate) are left out; estimates of 0 or infinity
// cannot sit on log axes and are counted in a note. A band without
// intervals is left out of its line.
struct ScoredEstimate {
  double true_epsilon = 0;     // > 0
  double estimate = kNoValue;  // >= 0, may be +inf; NaN: unanswered
  double units = kNoValue;     // NaN: not known (the units panel is then left empty)
  std::string series;          // plain text
};
struct CoverageBand {
  std::string axis;            // plain text, e.g. "true epsilon": one line per axis
  int band = 0;                // 1..5 (quintiles, low to high)
  double coverage = kNoValue;  // in [0, 1]; NaN: no interval in the band
  long intervals = 0;
};
struct EstimatorScoreCard {
  std::string title;
  std::vector<ScoredEstimate> cases;
  std::vector<CoverageBand> bands;
  double nominal_coverage = 0.95;
};
std::string draw_estimator_score_card(const EstimatorScoreCard& figure, const std::string& stem,
                                      const FigureOptions& options = {});

}  // namespace allocsim::plots
