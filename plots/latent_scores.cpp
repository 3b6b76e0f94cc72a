// Latent row and column scores of an association fit: a labelled scatter of
// the first two dimensions, or the one dimension against rank.
#include <algorithm>
#include <cmath>
#include <numeric>
#include <sstream>

#include "allocsim/core/error.hpp"
#include "allocsim/plots/latent_score_figure.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

// The plot area as fractions of the canvas (set explicitly, so data and
// pixels map exactly and labels can be placed in pixels).
constexpr double kLeft = 0.09, kRight = 0.97, kBottom = 0.13, kTop = 0.91;
// Glyph size of the label font, in pixels per point of font size (Sans,
// measured on pngcairo: average width and line height).
constexpr double kCharWidth = 0.62, kLineHeight = 1.45;
constexpr double kPointRadius = 6;  // pixels kept free around each marker

struct Box {
  double x0, y0, x1, y1;  // pixels, y up
  double overlap(const Box& o) const {
    const double w = std::min(x1, o.x1) - std::max(x0, o.x0);
    const double h = std::min(y1, o.y1) - std::max(y0, o.y0);
    return w > 0 && h > 0 ? w * h : 0;
  }
};

struct Marker {
  double x, y;        // data
  double px, py;      // pixels
  std::string label;  // empty: not labelled
  int style;          // 1 rows, 2 columns
};

struct PixelMap {
  double xmin, xmax, ymin, ymax, width, height;
  double px(double x) const { return (x - xmin) / (xmax - xmin) * width; }
  double py(double y) const { return (y - ymin) / (ymax - ymin) * height; }
  double x_of(double px) const { return xmin + px / width * (xmax - xmin); }
  double y_of(double py) const { return ymin + py / height * (ymax - ymin); }
};

// Characters shown for UTF-8 text.
double shown_characters(const std::string& text) {
  double count = 0;
  for (const char c : text) count += (static_cast<unsigned char>(c) & 0xC0) != 0x80;
  return count;
}

void check(const LatentScoreMap& f) {
  const Eigen::Index k = f.row_scores.cols();
  if (k < 1 || f.column_scores.cols() != k || f.strengths.size() != k)
    throw InputError("latent scores", "need K >= 1 dimensions in the scores and strengths alike");
  if (static_cast<std::size_t>(f.row_scores.rows()) != f.row_labels.size() ||
      static_cast<std::size_t>(f.column_scores.rows()) != f.column_labels.size())
    throw InputError("latent scores", "need one label per row and per column score");
}

std::string strength_text(const Vector& strengths, Eigen::Index k) {
  std::ostringstream out;
  out.precision(3);
  out << "dimension " << k + 1 << "  ({/Symbol s}_" << k + 1 << " = " << strengths(k) << ")";
  return out.str();
}

// Ranges with room for labels: 8% of the span on each side, the same span on
// both axes when they are alike (scores have unit weighted variance).
PixelMap pixel_map(const std::vector<Marker>& markers, int width, int height) {
  double xmin = 0, xmax = 0, ymin = 0, ymax = 0;
  for (const Marker& m : markers) {
    xmin = std::min(xmin, m.x);
    xmax = std::max(xmax, m.x);
    ymin = std::min(ymin, m.y);
    ymax = std::max(ymax, m.y);
  }
  const double xpad = 0.08 * std::max(xmax - xmin, 1e-9) + 1e-9;
  const double ypad = 0.08 * std::max(ymax - ymin, 1e-9) + 1e-9;
  return {xmin - 1.6 * xpad, xmax + 1.6 * xpad,        ymin - ypad,
          ymax + ypad,       (kRight - kLeft) * width, (kTop - kBottom) * height};
}

struct Placement {
  double ax, ay;        // anchor, pixels
  const char* justify;  // left, right, center
  bool leader = false;  // far from the point: join with a line
};

// Greedy placement: each label tries positions around its point (near ones
// first, then farther out) and takes the first whose box hits no placed
// label, no marker and stays inside the plot; failing that, the one of least
// overlap.
std::vector<Placement> place_labels(const std::vector<Marker>& markers, const PixelMap& map,
                                    double font_points, const Box& key) {
  const double cw = kCharWidth * font_points, lh = kLineHeight * font_points;
  std::vector<Box> taken = {key};
  for (const Marker& m : markers)
    taken.push_back(
        {m.px - kPointRadius, m.py - kPointRadius, m.px + kPointRadius, m.py + kPointRadius});
  std::vector<std::size_t> order(markers.size());
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return std::hypot(markers[a].x, markers[a].y) > std::hypot(markers[b].x, markers[b].y);
  });
  std::vector<Placement> out(markers.size(), Placement{0, 0, "left"});
  for (const std::size_t k : order) {
    const Marker& m = markers[k];
    if (m.label.empty()) continue;
    const double w = cw * shown_characters(m.label), h = lh;
    double best_cost = 1e300;
    Placement best{};
    Box best_box{};
    for (const double reach : {1.0, 2.2, 3.6, 5.2}) {
      const double d = 9 * reach, v = 0.75 * h * reach;
      const Placement candidates[] = {{m.px + d, m.py, "left"},      {m.px - d, m.py, "right"},
                                      {m.px, m.py + v, "center"},    {m.px, m.py - v, "center"},
                                      {m.px + d, m.py + v, "left"},  {m.px + d, m.py - v, "left"},
                                      {m.px - d, m.py + v, "right"}, {m.px - d, m.py - v, "right"}};
      for (Placement c : candidates) {
        const std::string j = c.justify;
        const double x0 = j == "left" ? c.ax : j == "right" ? c.ax - w : c.ax - w / 2;
        const Box box{x0, c.ay - h / 2, x0 + w, c.ay + h / 2};
        double cost = 0;
        for (const Box& t : taken) cost += box.overlap(t);
        const double outside = std::max(0.0, -box.x0) + std::max(0.0, box.x1 - map.width) +
                               std::max(0.0, -box.y0) + std::max(0.0, box.y1 - map.height);
        cost += outside * h * 10 + reach;  // prefer near positions among free ones
        c.leader = reach > 1.0;
        if (cost < best_cost) {
          best_cost = cost;
          best = c;
          best_box = box;
        }
      }
      if (best_cost < 10) break;  // a free position at this reach
    }
    taken.push_back(best_box);
    out[k] = best;
  }
  return out;
}

std::vector<Marker> markers_of(const LatentScoreMap& f, long& unlabelled) {
  std::vector<Marker> markers;
  for (Eigen::Index i = 0; i < f.row_scores.rows(); ++i)
    markers.push_back({f.row_scores(i, 0), f.row_scores(i, 1), 0, 0,
                       f.row_labels[static_cast<std::size_t>(i)], 1});
  for (Eigen::Index j = 0; j < f.column_scores.rows(); ++j)
    markers.push_back({f.column_scores(j, 0), f.column_scores(j, 1), 0, 0,
                       f.column_labels[static_cast<std::size_t>(j)], 2});
  unlabelled = 0;
  if (static_cast<long>(markers.size()) > f.max_labels) {
    std::vector<double> norms;
    for (const Marker& m : markers) norms.push_back(std::hypot(m.x, m.y));
    std::vector<double> sorted = norms;
    std::sort(sorted.rbegin(), sorted.rend());
    const double cut = sorted[static_cast<std::size_t>(std::max(0L, f.max_labels - 1))];
    long labelled = 0;
    for (std::size_t k = 0; k < markers.size(); ++k) {
      if (norms[k] >= cut && labelled < f.max_labels) {
        ++labelled;
      } else {
        markers[k].label.clear();
        ++unlabelled;
      }
    }
  }
  return markers;
}

void send_points(Gnuplot& gp, const std::vector<Marker>& markers, int style) {
  std::vector<std::vector<double>> rows;
  for (const Marker& m : markers)
    if (m.style == style) rows.push_back({m.x, m.y});
  gp.send1d(rows);
}

std::string draw_scatter(const LatentScoreMap& f, const std::string& stem,
                         const FigureOptions& options) {
  constexpr int kWidth = 1100, kHeight = 900;
  const int width = options.width_pixels > 0 ? options.width_pixels : kWidth;
  const int height = options.height_pixels > 0 ? options.height_pixels : kHeight;
  long unlabelled = 0;
  std::vector<Marker> markers = markers_of(f, unlabelled);
  const PixelMap map = pixel_map(markers, width, height);
  for (Marker& m : markers) {
    m.px = map.px(m.x);
    m.py = map.py(m.y);
  }
  const double label_points = std::max(6, options.font_size_points - 2);
  // The key sits in the top right corner: its box is kept free of labels.
  const double key_characters =
      std::max(shown_characters(f.row_name), shown_characters(f.column_name)) + 6;
  const Box key{map.width - key_characters * kCharWidth * options.font_size_points - 10,
                map.height - 2.6 * kLineHeight * options.font_size_points, map.width, map.height};
  const std::vector<Placement> placed = place_labels(markers, map, label_points, key);
  FigureScript script(stem, options, kWidth, kHeight);
  Gnuplot& gp = script.gp();
  gp << "set title " << quote_gnuplot_text(f.title) << " font '" << script.title_font() << "'\n"
     << "set lmargin at screen " << number(kLeft) << "\nset rmargin at screen " << number(kRight)
     << "\nset bmargin at screen " << number(kBottom) << "\nset tmargin at screen " << number(kTop)
     << "\n"
     << "set xrange [" << number(map.xmin) << ":" << number(map.xmax) << "]\n"
     << "set yrange [" << number(map.ymin) << ":" << number(map.ymax) << "]\n"
     << "set xlabel " << markup(strength_text(f.strengths, 0)) << "\n"
     << "set ylabel " << markup(strength_text(f.strengths, 1)) << "\n"
     << "set xzeroaxis ls 20\nset yzeroaxis ls 20\nset key top right\n"
     << "set style textbox opaque noborder margins 0.5, 0.3\n";
  int label = 1;
  for (std::size_t k = 0; k < markers.size(); ++k) {
    const Marker& m = markers[k];
    if (m.label.empty()) continue;
    const Placement& p = placed[k];
    const double x = map.x_of(p.ax), y = map.y_of(p.ay);
    const char* colour = m.style == 1 ? "#0072B2" : "#D55E00";
    gp << "set label " << label++ << " " << quote_gnuplot_text(m.label) << " at " << number(x)
       << ", " << number(y) << " " << p.justify << " font '," << number(label_points)
       << "' textcolor rgb '" << colour << "' boxed front\n";
    if (p.leader)
      gp << "set arrow from " << number(m.x) << ", " << number(m.y) << " to " << number(x) << ", "
         << number(y) << " nohead lw 0.6 lc rgb '#AAAAAA' back\n";
  }
  std::string note = f.note;
  if (unlabelled > 0)
    note += (note.empty() ? "" : "; ") + std::to_string(unlabelled) +
            " points unlabelled (labels for the farthest from 0)";
  note += std::string(note.empty() ? "" : "; ") +
          "a row and a column attract when their scores share a sign";
  gp << "set label " << label++ << " " << quote_gnuplot_text(note)
     << " at screen 0.5, screen 0.025 center font '," << number(label_points) << "'\n";
  gp << "plot '-' using 1:2 with points ls 1 title " << quote_gnuplot_text(f.row_name)
     << ", '-' using 1:2 with points ls 2 title " << quote_gnuplot_text(f.column_name) << "\n";
  send_points(gp, markers, 1);
  send_points(gp, markers, 2);
  return script.finish();
}

// 1, 2 or 5 times a power of ten, the nearest at or above `rough`.
double nice_step(double rough) {
  if (!(rough > 0) || !std::isfinite(rough)) return 1;
  const double power = std::pow(10.0, std::floor(std::log10(rough)));
  for (const double m : {1.0, 2.0, 5.0})
    if (m * power >= rough) return m * power;
  return 10 * power;
}

// One panel of the one-dimensional figure: labels on y, sorted by score.
void draw_ranked_panel(Gnuplot& gp, const std::string& title, const Vector& scores,
                       const std::vector<std::string>& labels, int style, double low, double high) {
  double longest = 0;
  for (const std::string& l : labels) longest = std::max(longest, shown_characters(l));
  std::vector<Eigen::Index> order(static_cast<std::size_t>(scores.size()));
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(),
                   [&](Eigen::Index a, Eigen::Index b) { return scores(a) < scores(b); });
  gp << "set title " << quote_gnuplot_text(title) << "\nset lmargin " << number(longest + 3)
     << "\nset yrange [0.3:" << number(static_cast<double>(order.size()) + 0.7) << "]\nset ytics (";
  for (std::size_t k = 0; k < order.size(); ++k)
    gp << (k ? ", " : "") << quote_gnuplot_tic_label(labels[static_cast<std::size_t>(order[k])])
       << " " << k + 1;
  gp << ")\nset xrange [" << number(low) << ":" << number(high) << "]\n"
     << "plot '-' using (0):2:1:(0) with vectors nohead ls " << style << " lw 1 notitle, "
     << "'-' using 1:2 with points ls " << style << " notitle\n";
  std::vector<std::vector<double>> rows;
  for (std::size_t k = 0; k < order.size(); ++k)
    rows.push_back({scores(order[k]), static_cast<double>(k + 1)});
  gp.send1d(rows);
  gp.send1d(rows);
}

std::string draw_ranked(const LatentScoreMap& f, const std::string& stem,
                        const FigureOptions& options) {
  const long most = std::max<long>(f.row_scores.rows(), f.column_scores.rows());
  FigureScript script(stem, options, 1300, static_cast<int>(std::max(560L, 22 * most + 200)));
  Gnuplot& gp = script.gp();
  double low = std::min({0.0, f.row_scores.minCoeff(), f.column_scores.minCoeff()});
  double high = std::max({0.0, f.row_scores.maxCoeff(), f.column_scores.maxCoeff()});
  const double pad = 0.06 * std::max(high - low, 1e-9);
  low -= pad;
  high += pad;
  gp << "set multiplot layout 1,2 title " << quote_gnuplot_text(f.title) << " font '"
     << script.title_font() << "'\n"
     << "set xlabel " << markup(strength_text(f.strengths, 0)) << "\n"
     << "set xzeroaxis ls 20\nset yzeroaxis ls 20\nunset mytics\nset grid ytics xtics\n"
     << "unset key\nset xtics " << number(nice_step((high - low) / 5)) << "\nset bmargin 6\n";
  std::string note = f.note;
  note += std::string(note.empty() ? "" : "; ") +
          "one latent dimension: a row and a column attract when their scores share a sign";
  gp << "set label 1 " << quote_gnuplot_text(note) << " at screen 0.5, screen 0.02 center\n";
  draw_ranked_panel(gp, f.row_name, f.row_scores.col(0), f.row_labels, 1, low, high);
  gp << "unset label 1\n";
  draw_ranked_panel(gp, f.column_name, f.column_scores.col(0), f.column_labels, 2, low, high);
  gp << "unset multiplot\n";
  return script.finish();
}

}  // namespace

std::string draw_latent_scores(const LatentScoreMap& figure, const std::string& stem,
                               const FigureOptions& options) {
  check(figure);
  return figure.row_scores.cols() >= 2 ? draw_scatter(figure, stem, options)
                                       : draw_ranked(figure, stem, options);
}

std::optional<LatentScoreMap> latent_score_map(const GainsReconstructionReport& report,
                                               const std::string& source) {
  if (!report.latent || report.latent->rank < 1) return std::nullopt;
  const LatentAssociationResult& l = *report.latent;
  LatentScoreMap map;
  map.title = "latent scores of " + source + ": " + latent_model_name(l.rank) +
              (l.rank_chosen ? " (chosen by BIC)" : "");
  map.row_labels = report.row_labels;
  map.column_labels = report.column_labels;
  map.row_scores = l.row_scores;
  map.column_scores = l.column_scores;
  map.strengths = l.strengths;
  if (l.rank > 2) map.note = "dimensions 1 and 2 of " + std::to_string(l.rank);
  return map;
}

}  // namespace allocsim::plots
