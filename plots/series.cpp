// Figures against the choice temperature: a structure metric with its null
// band, the recovered transport temperature, and distances to couplings.
#include <algorithm>
#include <cmath>
#include <map>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"
#include "level_plots.hpp"

namespace allocsim::plots {
namespace {

using Rows = std::vector<std::vector<double>>;

// The tics of a log axis over [low, high] (> 0): 1, 2 and 5 times the
// powers of ten, written plainly ("0.02"), when it spans less than three
// decades (powers alone would leave one or two labels); else the powers.
std::string log_tics(const char* axis, double low, double high) {
  const std::string name(axis);
  if (!(low > 0) || !(high > low) || high >= 1000 * low)
    return "set format " + name + " '10^{%L}'\n";
  std::string tics;
  for (int power = static_cast<int>(std::floor(std::log10(low)));
       power <= static_cast<int>(std::ceil(std::log10(high))); ++power) {
    for (const double mantissa : {1.0, 2.0, 5.0}) {
      const double tic = mantissa * std::pow(10.0, power);
      if (tic >= low && tic <= high) tics += (tics.empty() ? "" : ", ") + number(tic);
    }
  }
  return "set format " + name + " '%g'\nset " + name + "tics (" + tics + ")\n";
}

// The temperature axis: log scale when the temperatures span a factor 3
// (temperatures are swept on log spacings).
void temperature_axis(Gnuplot& gp, const std::vector<Point>& points) {
  std::vector<double> x;
  for (const auto& p : points) x.push_back(p.x);
  const bool log = wants_log_axis(x, 3);
  gp << "set xlabel " << markup("choice temperature {/:Italic T}  (gain units)") << "\n";
  if (log) {
    const auto [low, high] = std::minmax_element(x.begin(), x.end());
    gp << "set logscale x\n" << log_tics("x", *low / 1.25, *high * 1.25);
  }
  gp << padded_range("x", x, log);
}

Rows xy(const std::vector<Point>& points) {
  Rows rows;
  for (const auto& p : points) rows.push_back({p.x, p.y});
  return rows;
}

// Mean y at each distinct x (several runs at one temperature are replicates).
Rows means_by_x(const std::vector<Point>& sorted) {
  Rows rows;
  for (std::size_t a = 0; a < sorted.size();) {
    std::size_t b = a;
    double sum = 0;
    while (b < sorted.size() && sorted[b].x == sorted[a].x) sum += sorted[b++].y;
    rows.push_back({sorted[a].x, sum / static_cast<double>(b - a)});
    a = b;
  }
  return rows;
}

bool has_replicates(const std::vector<Point>& sorted) {
  for (std::size_t k = 1; k < sorted.size(); ++k) {
    if (sorted[k].x == sorted[k - 1].x) return true;
  }
  return false;
}

// x, mean, low, high averaged over null summaries at the same x, sorted by
// x, of one level (all levels when level < 0).
Rows band_rows(const std::vector<NullBandPoint>& band, int level = -1) {
  std::map<double, std::vector<double>> sums;  // x -> mean, low, high, count
  for (const auto& b : band) {
    if (!std::isfinite(b.x) || !std::isfinite(b.mean) || !std::isfinite(b.low) ||
        !std::isfinite(b.high) || (level >= 0 && b.level != level))
      continue;
    auto& s = sums[b.x];
    if (s.empty()) s.assign(4, 0.0);
    s[0] += b.mean, s[1] += b.low, s[2] += b.high, s[3] += 1;
  }
  Rows rows;
  for (const auto& [x, s] : sums) rows.push_back({x, s[0] / s[3], s[1] / s[3], s[2] / s[3]});
  return rows;
}

// One series: points (and a line through the means at each x when there
// are replicates, else the points joined).
struct SeriesPlot {
  std::string elements;    // the plot elements, comma-separated
  std::vector<Rows> data;  // one block per element
};

void add_series(SeriesPlot& plot, const std::vector<Point>& sorted, int style,
                const std::string& title) {
  const std::string sep = plot.elements.empty() ? "" : ", ";
  if (has_replicates(sorted)) {
    plot.elements += sep + "'-' using 1:2 with points ls " + std::to_string(style) + " title " +
                     title + ", '-' using 1:2 with lines ls " + std::to_string(style) + " notitle";
    plot.data.push_back(xy(sorted));
    plot.data.push_back(means_by_x(sorted));
  } else {
    plot.elements +=
        sep + "'-' using 1:2 with linespoints ls " + std::to_string(style) + " title " + title;
    plot.data.push_back(xy(sorted));
  }
}

void send(Gnuplot& gp, const SeriesPlot& plot) {
  gp << "plot " << plot.elements << "\n";
  for (const auto& block : plot.data) gp.send1d(block);
}

// A legend entry for the lines through the means, when a level has several runs at one x.
std::string means_entry(const std::vector<Point>& sorted, const std::vector<int>& levels) {
  const bool replicates = std::any_of(levels.begin(), levels.end(), [&](int level) {
    return has_replicates(points_of_level(sorted, level));
  });
  return replicates ? ", keyentry with lines lc rgb '#333333' lw 2 title " +
                          quote_gnuplot_text("line: mean over the runs at each T")
                    : "";
}

// The y range shared by panels: the values with a margin.
std::string shared_y_range(const Factor& factor, const std::vector<double>& y, bool log = false) {
  return drawn_in_panels(factor) ? padded_range("y", y, log) : "";
}

std::string level_title(const Factor& factor, int level) {
  const auto k = static_cast<std::size_t>(level);
  return quote_gnuplot_text(k < factor.levels.size() ? factor.levels[k] : "?");
}

}  // namespace

std::string draw_metric_against_temperature(const MetricAgainstTemperature& figure,
                                            const std::string& stem, const FigureOptions& options) {
  const std::vector<Point> runs = sorted_finite(figure.runs);
  if (runs.empty())
    throw InputError(figure.metric_name + " against temperature", "no finite points to draw");
  const std::vector<int> levels = levels_with_points(runs);
  const ImageSize size = image_size(figure.factor, levels.size(), {1000, 700});
  FigureScript script(stem, options, size.width, size.height);
  Gnuplot& gp = script.gp();
  gp << y_label(quote_gnuplot_text(figure.metric_name));
  temperature_axis(gp, runs);
  std::vector<double> y;
  for (const auto& p : runs) y.push_back(p.y);
  for (const auto& row : band_rows(figure.null_band)) y.insert(y.end(), {row[2], row[3]});
  gp << shared_y_range(figure.factor, y);
  const bool series = figure.factor.split() && !figure.factor.panels;
  draw_plots(
      script, figure.title, figure.factor, levels, legend_command(figure.factor), [&](int level) {
        SeriesPlot plot;
        if (!series) {
          const Rows band = band_rows(figure.null_band, level);
          if (!band.empty()) {
            plot.elements = "'-' using 1:3:4 with filledcurves ls 21 fs solid 0.6 noborder title " +
                            quote_gnuplot_text(figure.null_name + ": 95% band") +
                            ", '-' using 1:2 with lines ls 20 title " +
                            quote_gnuplot_text(figure.null_name + ": mean");
            plot.data.push_back(band);
            plot.data.push_back(band);
          }
          add_series(plot, points_of_level(runs, level), 1,
                     quote_gnuplot_text(figure.metric_name + " of the emergent allocation"));
          return send(gp, plot);
        }
        bool any_band = false;
        for (const int l : levels) {
          const int style = level_style(l);
          add_series(plot, points_of_level(runs, l), style, level_title(figure.factor, l));
          const Rows band = band_rows(figure.null_band, l);
          if (band.empty()) continue;
          plot.elements +=
              ", '-' using 1:2 with lines ls " + std::to_string(style) + " dt 2 lw 1.2 notitle";
          plot.data.push_back(band);
          any_band = true;
        }
        plot.elements += means_entry(runs, levels);
        if (any_band)
          plot.elements += ", keyentry with lines ls 20 title " +
                           quote_gnuplot_text("dashed: " + figure.null_name + " mean");
        send(gp, plot);
      });
  return script.finish();
}

std::string draw_z_scores_against_temperature(const ZScoresAgainstTemperature& figure,
                                              const std::string& stem,
                                              const FigureOptions& options) {
  const std::vector<Point> runs = sorted_finite(figure.runs);
  if (runs.empty())
    throw InputError("z-scores of " + figure.metric_name, "no finite points to draw");
  if (!(figure.threshold > 0) || !std::isfinite(figure.threshold))
    throw InputError("z-scores of " + figure.metric_name, "the threshold must be > 0");
  const std::vector<int> levels = levels_with_points(runs);
  const ImageSize size = image_size(figure.factor, levels.size(), {1000, 700});
  FigureScript script(stem, options, size.width, size.height);
  Gnuplot& gp = script.gp();
  gp << y_label(quote_gnuplot_text("z-score of " + figure.metric_name + " against the null"));
  temperature_axis(gp, runs);
  std::vector<double> y = {-1.5 * figure.threshold, 1.5 * figure.threshold};
  for (const auto& p : runs) y.push_back(p.y);
  gp << padded_range("y", y, false);
  const std::string t = number(figure.threshold);
  const std::string reference = "'+' using 1:(-" + t + "):(" + t +
                                ") with filledcurves ls 21 fs solid 0.5 noborder title " +
                                quote_gnuplot_text("|z| <= " + t + ": within the null's spread") +
                                ", 0 with lines ls 20 notitle";
  const bool series = figure.factor.split() && !figure.factor.panels;
  draw_plots(script, figure.title, figure.factor, levels, legend_command(figure.factor),
             [&](int level) {
               SeriesPlot plot;
               plot.elements = reference;
               if (!series) {
                 add_series(plot, points_of_level(runs, level), 1,
                            quote_gnuplot_text("z-score of each run"));
               } else {
                 for (const int l : levels)
                   add_series(plot, points_of_level(runs, l), level_style(l),
                              level_title(figure.factor, l));
                 plot.elements += means_entry(runs, levels);
               }
               send(gp, plot);
             });
  return script.finish();
}

std::string draw_temperature_recovery(const TemperatureRecovery& figure, const std::string& stem,
                                      const FigureOptions& options) {
  std::vector<Point> shown;
  long boundary = 0;
  for (const auto& p : sorted_finite(figure.runs)) {
    if (p.x > 0 && p.y > 0)
      shown.push_back(p);
    else
      ++boundary;
  }
  boundary +=
      static_cast<long>(figure.runs.size()) - static_cast<long>(sorted_finite(figure.runs).size());
  if (shown.empty())
    throw InputError("temperature recovery", "no positive finite estimate to draw");
  double low = shown.front().x, high = shown.front().x;
  for (const auto& p : shown) {
    low = std::min({low, p.x, p.y});
    high = std::max({high, p.x, p.y});
    if (std::isfinite(p.low) && p.low > 0) low = std::min(low, p.low);
    if (std::isfinite(p.high)) high = std::max(high, p.high);
  }
  low /= 1.5, high *= 1.5;
  const bool log = high >= 10 * low;  // log axes need a decade to show a labelled tick
  const std::vector<int> levels = levels_with_points(shown);
  const bool series = figure.factor.split() && !figure.factor.panels;
  // Series of several levels at one temperature are shifted apart along x
  // (at most 6% of a decade, or of the range, from first to last level) so
  // their bars do not cover each other.
  const auto dodged = [&](const Point& p) {
    if (!series || levels.size() < 2) return p.x;
    const auto at = std::find(levels.begin(), levels.end(), p.level) - levels.begin();
    const double step = std::min(0.015, 0.06 / static_cast<double>(levels.size() - 1));
    const double shift = step * (static_cast<double>(at) - 0.5 * (levels.size() - 1.0));
    return log ? p.x * std::pow(10.0, shift) : p.x + shift * (high - low);
  };
  const auto bars_of = [&](int level) {
    Rows bars;
    for (const auto& p : points_of_level(shown, level)) {
      const bool interval = !std::isnan(p.low) || !std::isnan(p.high);
      const double lo = !interval ? p.y : (std::isfinite(p.low) && p.low > 0 ? p.low : low);
      const double hi = !interval ? p.y : (std::isfinite(p.high) ? p.high : high);
      bars.push_back({dodged(p), p.y, lo, hi});
    }
    return bars;
  };
  const ImageSize size = image_size(figure.factor, levels.size(), {900, 800});
  FigureScript script(stem, options, size.width, size.height);
  Gnuplot& gp = script.gp();
  gp << "set xlabel " << markup("true choice temperature {/:Italic T}  (gain units)") << "\n"
     << y_label(markup("estimated transport temperature {/Symbol e}  (gain units)"))
     << (log ? "set logscale xy\n" + log_tics("x", low, high) + log_tics("y", low, high) : "")
     << "set xrange [" << number(low) << ":" << number(high) << "]\n"
     << "set yrange [" << number(low) << ":" << number(high) << "]\n";
  if (!drawn_in_panels(figure.factor)) gp << "set size ratio -1\n";
  if (boundary > 0) {
    gp << "set label "
       << quote_gnuplot_text(std::to_string(boundary) +
                             (boundary == 1 ? " boundary estimate" : " boundary estimates") +
                             " (0 or infinite) not shown")
       << " at screen 0.98, screen 0.02 right\n";
  }
  const std::string legend =
      figure.factor.split() ? legend_command(figure.factor) : "set key top left\n";
  draw_plots(script, figure.title, figure.factor, levels, legend, [&](int level) {
    gp << "plot x with lines ls 20 title " << markup("identity  {/Symbol e} = {/:Italic T}");
    std::vector<Rows> blocks;
    if (!series) {
      gp << ", '-' using 1:2:3:4 with yerrorbars ls 1 title "
         << quote_gnuplot_text("estimate with " + figure.interval_name);
      blocks.push_back(bars_of(level));
    } else {
      for (const int l : levels) {
        gp << ", '-' using 1:2:3:4 with yerrorbars ls " << level_style(l) << " title "
           << level_title(figure.factor, l);
        blocks.push_back(bars_of(l));
      }
      gp << ", keyentry with points ls 20 pt 0 title "
         << quote_gnuplot_text("bars: " + figure.interval_name);
    }
    gp << "\n";
    for (const auto& block : blocks) gp.send1d(block);
  });
  return script.finish();
}

namespace {

// Two panels (to the entropic, to the exact coupling), one series per level.
void draw_distance_series(FigureScript& script, const DistanceAgainstTemperature& figure,
                          const std::vector<Point>& entropic, const std::vector<Point>& exact,
                          const std::vector<int>& levels) {
  Gnuplot& gp = script.gp();
  gp << "set multiplot layout 1,2 title " << quote_gnuplot_text(figure.title) << " font '"
     << script.title_font() << "' margins 0.07,0.78,0.12,0.87 spacing 0.08\n"
     << "set key at screen 0.79, screen 0.87 left top vertical Left reverse title "
     << quote_gnuplot_text(figure.factor.key) << " left\n";
  const std::vector<std::pair<std::string, const std::vector<Point>*>> panels = {
      {"to the entropic coupling at the estimated {/Symbol e}", &entropic},
      {"to the exact (optimal) coupling", &exact}};
  for (std::size_t k = 0; k < panels.size(); ++k) {
    gp << "set title " << markup(panels[k].first) << "\n";
    if (k == 1) gp << "unset key\nunset ylabel\n";
    SeriesPlot plot;
    for (const int l : levels) {
      const std::vector<Point> points = points_of_level(*panels[k].second, l);
      if (!points.empty()) add_series(plot, points, level_style(l), level_title(figure.factor, l));
    }
    if (plot.elements.empty()) plot.elements = "NaN notitle";  // no point in this panel
    send(gp, plot);
  }
  gp << "unset multiplot\n";
}

}  // namespace

std::string draw_distance_against_temperature(const DistanceAgainstTemperature& figure,
                                              const std::string& stem,
                                              const FigureOptions& options) {
  const std::vector<Point> entropic = sorted_finite(figure.to_entropic);
  const std::vector<Point> exact = sorted_finite(figure.to_exact);
  if (entropic.empty() && exact.empty())
    throw InputError("distance against temperature", "no finite points to draw");
  std::vector<double> y;
  std::vector<Point> all = entropic;
  all.insert(all.end(), exact.begin(), exact.end());
  for (const auto& p : all) y.push_back(p.y);
  const std::vector<int> levels = levels_with_points(all);
  const bool series = figure.factor.split() && !figure.factor.panels;
  const ImageSize size =
      series ? ImageSize{1400, 650} : image_size(figure.factor, levels.size(), {1000, 700});
  FigureScript script(stem, options, size.width, size.height);
  Gnuplot& gp = script.gp();
  gp << y_label(quote_gnuplot_text(figure.distance_name + " from the emergent allocation P"));
  const bool log_y = wants_log_axis(y, 10);
  if (log_y) gp << "set logscale y\nset format y '10^{%L}'\n";
  temperature_axis(gp, all);
  if (figure.factor.split()) gp << padded_range("y", y, log_y);
  if (series) {
    draw_distance_series(script, figure, entropic, exact, levels);
    return script.finish();
  }
  draw_plots(script, figure.title, figure.factor, levels, legend_command(figure.factor),
             [&](int level) {
               SeriesPlot plot;
               const std::vector<Point> to_entropic = points_of_level(entropic, level);
               const std::vector<Point> to_exact = points_of_level(exact, level);
               if (!to_entropic.empty())
                 add_series(plot, to_entropic, 1,
                            markup("to the entropic coupling at the estimated {/Symbol e}"));
               if (!to_exact.empty())
                 add_series(plot, to_exact, 2, markup("to the exact (optimal) coupling"));
               if (plot.elements.empty()) plot.elements = "NaN notitle";
               send(gp, plot);
             });
  return script.finish();
}

}  // namespace allocsim::plots
