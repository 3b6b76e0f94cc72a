// A metric's null distribution with the observed value marked.
#include <algorithm>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

using Rows = std::vector<std::vector<double>>;

std::vector<double> finite(const std::vector<double>& values) {
  std::vector<double> out;
  for (const double v : values)
    if (std::isfinite(v)) out.push_back(v);
  return out;
}

// (bin centre, count) for about sqrt(N) bins (at least 5, at most 40) over
// the range of the null values and the observed value.
Rows histogram(const std::vector<double>& values, double observed, double& width) {
  double low = std::min(*std::min_element(values.begin(), values.end()), observed);
  double high = std::max(*std::max_element(values.begin(), values.end()), observed);
  if (!(high > low)) {
    low -= 0.5;
    high += 0.5;
  }
  const long bins =
      std::clamp<long>(std::lround(std::sqrt(static_cast<double>(values.size()))), 5, 40);
  width = (high - low) / static_cast<double>(bins);
  std::vector<double> counts(static_cast<std::size_t>(bins), 0.0);
  for (const double v : values) {
    const long k = std::min(bins - 1, static_cast<long>((v - low) / width));
    counts[static_cast<std::size_t>(std::max(0L, k))] += 1;
  }
  Rows rows;
  for (long k = 0; k < bins; ++k)
    rows.push_back(
        {low + (static_cast<double>(k) + 0.5) * width, counts[static_cast<std::size_t>(k)]});
  return rows;
}

std::string short_number(double value) {
  if (!std::isfinite(value)) return "undefined";
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.3g", value);
  return buffer;
}

}  // namespace

std::string draw_null_histograms(const NullHistograms& figure, const std::string& stem,
                                 const FigureOptions& options) {
  if (figure.panels.empty() || figure.panels.size() > 2)
    throw InputError("null histograms",
                     "need 1 or 2 panels, got " + std::to_string(figure.panels.size()));
  const std::size_t k = figure.panels.size();
  FigureScript script(stem, options, 560 * static_cast<int>(k) + 120, 600);
  Gnuplot& gp = script.gp();
  gp << "set multiplot layout 1," << k << " title " << quote_gnuplot_text(figure.title) << " font '"
     << script.title_font() << "'\n"
     << "set style fill solid 0.6 border -1\nset key below\nset ylabel 'null matrices'\n"
     << "set yrange [0:*]\nset bmargin 5\n";
  for (const NullDistribution& panel : figure.panels) {
    const std::vector<double> values = finite(panel.values);
    if (values.empty())
      throw InputError("null histograms", panel.metric + " has no finite null values");
    double width = 1;
    const Rows rows = histogram(values, panel.observed, width);
    gp << "set title "
       << quote_gnuplot_text(panel.metric + ": observed " + short_number(panel.observed) +
                             ", z = " + short_number(panel.z_score))
       << "\nset xlabel "
       << quote_gnuplot_text(panel.metric + "   (p upper " + short_number(panel.p_upper) +
                             ", p two-sided " + short_number(panel.p_two_sided) + ")")
       << "\nset boxwidth " << number(width * 0.95) << "\n"
       << "set arrow 1 from " << number(panel.observed) << ", graph 0 to " << number(panel.observed)
       << ", graph 1 nohead lw 3 lc rgb '#c0392b' front\n"
       << "plot '-' using 1:2 with boxes ls 1 title "
       << quote_gnuplot_text(std::to_string(values.size()) + " " + panel.model + " null matrices")
       << ", NaN with lines lw 3 lc rgb '#c0392b' title 'observed'\n";
    gp.send1d(rows);
  }
  return script.finish();
}

}  // namespace allocsim::plots
