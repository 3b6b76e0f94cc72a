// Trends of a metric against a swept key, per level of a factor: does the
// metric (e.g. NODF's z-score against its null) rise or fall with x (e.g.
// the choice temperature), and how sure is that?
//
// For the runs of one level (x_i > 0, metric y_i, optionally the null
// z-score z_i of each run):
//   * Spearman's rho of x and y: the Pearson correlation of their ranks,
//     ties given their average rank (Spearman 1904; as scipy.stats.spearmanr).
//     Two-sided permutation p-value over B random permutations of y:
//       p = (1 + #{perm : |rho_perm| >= |rho|}) / (1 + B)
//     (Phipson & Smyth 2010: never 0, and P(p <= a) <= a under no trend).
//   * slope b of the least-squares line y = a + b log10(x): the change of the
//     metric per tenfold x. Its interval comes from a bootstrap over
//     replicates: runs at the same x form a group; each draw keeps the
//     groups' means and sizes and resamples each group's residuals, inflated
//     by sqrt(g / (g - 1)) for a group of g runs so that their spread is the
//     unbiased one (modified residuals, Davison & Hinkley 1997, section
//     6.2.3); the interval holds the central `confidence` share of the
//     refitted slopes (percentile interval). It needs at least two runs at
//     every x value and two x values.
//   * counts of runs with z > z_threshold ("more" than the null) and
//     z < -z_threshold ("less"), out of the runs with a finite z.
// Runs whose x or y is not finite are left out (counted); x <= 0 is an
// error of the caller (log10 x must exist): measure_trend throws
// InputError. Random draws come from RandomStream(seed, stream, trend), so
// a result is reproducible.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace allocsim {

struct TrendOptions {
  long permutations = 9999;     // B of the permutation p-value; >= 99
  long bootstrap_draws = 2000;  // refitted slopes of the interval; >= 200
  double confidence = 0.95;     // level of the slope interval; in (0, 1)
  double significance = 0.05;   // p below it: the words say "rises" / "falls"; in (0, 1)
  double z_threshold = 2;       // |z| above it counts as more / less than the null; > 0
  std::uint64_t seed = 1;       // seed of the permutations and bootstrap draws

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class TrendDirection { rises, falls, no_clear_trend, not_measurable };
std::string to_string(TrendDirection direction);

struct TrendResult {
  long runs = 0;            // runs used (finite x and y)
  long left_out = 0;        // runs without a finite x or y
  long x_values = 0;        // distinct x values among the runs used
  long smallest_group = 0;  // fewest runs sharing one x value
  double rho = 0;           // Spearman's rho (NaN when x or y is constant)
  double p_value = 1;       // two-sided permutation p-value (NaN with rho)
  double slope = 0;         // per tenfold x (NaN with fewer than two x values)
  double slope_low = 0;     // bootstrap interval; NaN when not measurable (see note)
  double slope_high = 0;
  long with_z = 0;  // runs with a finite z-score
  long above = 0;   // z > z_threshold
  long below = 0;   // z < -z_threshold
  TrendDirection direction = TrendDirection::not_measurable;
  std::string note;  // why something could not be measured; empty otherwise

  // One line: rho, p, slope and interval, counts.
  std::string brief() const;
};

// Average ranks (1-based; ties share the mean of their ranks).
std::vector<double> average_ranks(const std::vector<double>& values);

// Spearman's rho of two equally long samples; NaN when either is constant
// or shorter than 2.
double spearman_rho(const std::vector<double>& x, const std::vector<double>& y);

// Least-squares slope of y against log10(x) (x > 0); NaN when x takes one value.
double log10_slope(const std::vector<double>& x, const std::vector<double>& y);

// The trend of y against x for one level (see above). `z` is empty or as
// long as x; `stream` separates the random draws of different levels.
TrendResult measure_trend(const std::vector<double>& x, const std::vector<double>& y,
                          const std::vector<double>& z, const TrendOptions& options,
                          std::uint64_t stream = 0);

// Words of a trend line; the level is e.g. "scenario.capacities = zipf" or
// "" (all runs), the null e.g. "the curveball null" ("" when no z-score).
struct TrendWording {
  std::string level;
  std::string metric;     // e.g. "nodf_z_score"
  std::string x_name;     // e.g. "dynamics.temperature"
  std::string more_than;  // e.g. "more nested than the curveball null"
  std::string less_than;  // e.g. "less nested"
};

// One plain sentence, e.g. "with scenario.capacities = zipf, nodf_z_score
// rises with dynamics.temperature: rho 0.81, p < 0.001; slope 1.2 per tenfold
// dynamics.temperature (95% interval 0.9 to 1.5); 20 of 24 runs more nested
// than the curveball null, 0 less nested."
std::string describe_trend(const TrendResult& result, const TrendWording& wording,
                           const TrendOptions& options);

// The runs of a sweep split by a factor: level labels as given per run.
struct TrendLevel {
  std::string level;  // "" for all runs when there is no factor
  TrendResult result;
};

// One trend per distinct label of `levels` (empty: one level of all runs),
// in order of first appearance; level k draws from stream k.
std::vector<TrendLevel> trends_by_level(const std::vector<double>& x, const std::vector<double>& y,
                                        const std::vector<double>& z,
                                        const std::vector<std::string>& levels,
                                        const TrendOptions& options);

}  // namespace allocsim
