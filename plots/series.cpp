// Figures against the choice temperature: a structure metric with its null
// band, the recovered transport temperature, and distances to couplings.
#include <algorithm>
#include <cmath>
#include <map>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

using Rows = std::vector<std::vector<double>>;

// The temperature axis: log scale when the temperatures span a factor 20.
void temperature_axis(Gnuplot& gp, const std::vector<Point>& points) {
  std::vector<double> x;
  for (const auto& p : points) x.push_back(p.x);
  const bool log = wants_log_axis(x);
  gp << "set xlabel " << markup("choice temperature {/:Italic T}  (gain units)") << "\n";
  if (log) gp << "set logscale x\nset format x '10^{%L}'\n";
  gp << padded_range("x", x, log) << "set key outside bottom center horizontal\nset bmargin 7\n";
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

// x, mean, low, high averaged over null summaries at the same x, sorted by x.
Rows band_rows(const std::vector<NullBandPoint>& band) {
  std::map<double, std::vector<double>> sums;  // x -> mean, low, high, count
  for (const auto& b : band) {
    if (!std::isfinite(b.x) || !std::isfinite(b.mean) || !std::isfinite(b.low) ||
        !std::isfinite(b.high))
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

}  // namespace

std::string draw_metric_against_temperature(const MetricAgainstTemperature& figure,
                                            const std::string& stem, const FigureOptions& options) {
  const std::vector<Point> runs = sorted_finite(figure.runs);
  if (runs.empty())
    throw InputError(figure.metric_name + " against temperature", "no finite points to draw");
  FigureScript script(stem, options, 1000, 700);
  Gnuplot& gp = script.gp();
  gp << "set title " << quote_gnuplot_text(figure.title) << " font '" << script.title_font()
     << "'\n"
     << "set ylabel " << quote_gnuplot_text(figure.metric_name) << "\n";
  temperature_axis(gp, runs);
  SeriesPlot plot;
  const Rows band = band_rows(figure.null_band);
  if (!band.empty()) {
    plot.elements = "'-' using 1:3:4 with filledcurves ls 21 fs solid 0.6 noborder title " +
                    quote_gnuplot_text(figure.null_name + ": 95% band") +
                    ", '-' using 1:2 with lines ls 20 title " +
                    quote_gnuplot_text(figure.null_name + ": mean");
    plot.data.push_back(band);
    plot.data.push_back(band);
  }
  add_series(plot, runs, 1, quote_gnuplot_text(figure.metric_name + " of the emergent allocation"));
  send(gp, plot);
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
  Rows bars;
  for (const auto& p : shown) {
    const bool interval = !std::isnan(p.low) || !std::isnan(p.high);
    const double lo = !interval ? p.y : (std::isfinite(p.low) && p.low > 0 ? p.low : low);
    const double hi = !interval ? p.y : (std::isfinite(p.high) ? p.high : high);
    bars.push_back({p.x, p.y, lo, hi});
  }
  FigureScript script(stem, options, 900, 800);
  Gnuplot& gp = script.gp();
  gp << "set title " << quote_gnuplot_text(figure.title) << " font '" << script.title_font()
     << "'\n"
     << "set xlabel " << markup("true choice temperature {/:Italic T}  (gain units)") << "\n"
     << "set ylabel " << markup("estimated transport temperature {/Symbol e}  (gain units)")
     << "\n"
     // log axes need a decade to show a labelled tick; narrower ranges stay linear
     << (high >= 10 * low ? "set logscale xy\nset format x '10^{%L}'\nset format y '10^{%L}'\n"
                          : "")
     << "set xrange [" << number(low) << ":" << number(high) << "]\n"
     << "set yrange [" << number(low) << ":" << number(high) << "]\n"
     << "set size ratio -1\nset key top left\n";
  if (boundary > 0) {
    gp << "set label "
       << quote_gnuplot_text(std::to_string(boundary) +
                             (boundary == 1 ? " boundary estimate" : " boundary estimates") +
                             " (0 or infinite) not shown")
       << " at graph 0.98, graph 0.04 right\n";
  }
  gp << "plot x with lines ls 20 title " << markup("identity  {/Symbol e} = {/:Italic T}")
     << ", '-' using 1:2:3:4 with yerrorbars ls 1 title "
     << quote_gnuplot_text("estimate with " + figure.interval_name) << "\n";
  gp.send1d(bars);
  return script.finish();
}

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
  FigureScript script(stem, options, 1000, 700);
  Gnuplot& gp = script.gp();
  gp << "set title " << quote_gnuplot_text(figure.title) << " font '" << script.title_font()
     << "'\n"
     << "set ylabel "
     << quote_gnuplot_text(figure.distance_name + " from the emergent allocation P") << "\n";
  if (wants_log_axis(y, 10)) gp << "set logscale y\nset format y '10^{%L}'\n";
  temperature_axis(gp, all);
  SeriesPlot plot;
  if (!entropic.empty())
    add_series(plot, entropic, 1, markup("to the entropic coupling at the estimated {/Symbol e}"));
  if (!exact.empty()) add_series(plot, exact, 2, markup("to the exact (optimal) coupling"));
  send(gp, plot);
  return script.finish();
}

}  // namespace allocsim::plots
