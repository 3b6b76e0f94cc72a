// The answer of `allocsim trend` per level, as one horizontal bar per level.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"
#include "level_plots.hpp"

namespace allocsim::plots {
namespace {

std::string short_number(double value, int digits = 2) {
  if (!std::isfinite(value)) return "n/a";
  char text[32];
  std::snprintf(text, sizeof text, "%.*g", digits, value);
  return text;
}

// "rho -0.47, p = 0.045; |z| > 2: 0 above, 20 below, of 20" (plain text).
std::string row_words(const TrendRow& row, double z_threshold) {
  std::string words = "rho " + short_number(row.rho) + ", p ";
  words += std::isfinite(row.p_value) && row.p_value < 0.001 ? "< 0.001"
           : std::isfinite(row.p_value)                      ? "= " + short_number(row.p_value)
                                                             : "n/a";
  if (row.with_z > 0) {
    words += "; |z| > " + short_number(z_threshold) + ": " + std::to_string(row.above) +
             " above, " + std::to_string(row.below) + " below of " + std::to_string(row.with_z);
  } else {
    words += "; " + std::to_string(row.runs) + " runs";
  }
  if (!std::isfinite(row.slope))
    words += "; no slope";
  else if (!std::isfinite(row.low) || !std::isfinite(row.high))
    words += "; no interval (needs 2 runs at each x)";
  return words;
}

std::string level_name(const TrendSummary& figure, int level) {
  const auto k = static_cast<std::size_t>(level);
  if (!figure.factor.split()) return "all runs";
  return k < figure.factor.levels.size() ? figure.factor.levels[k] : "?";
}

}  // namespace

std::string draw_trend_summary(const TrendSummary& figure, const std::string& stem,
                               const FigureOptions& options) {
  if (figure.rows.empty()) throw InputError("trend summary", "no level to draw");
  std::vector<double> x = {0.0};
  for (const auto& row : figure.rows) {
    for (const double v : {row.slope, row.low, row.high})
      if (std::isfinite(v)) x.push_back(v);
  }
  const auto rows = static_cast<int>(figure.rows.size());
  FigureScript script(stem, options, 1200, std::max(500, 230 + 70 * rows));
  Gnuplot& gp = script.gp();
  const std::string level_percent = std::to_string(std::lround(100 * figure.confidence)) + "%";
  gp << "set title " << quote_gnuplot_text(figure.title) << " font '" << script.title_font()
     << "'\n"
     << "set xlabel "
     << quote_gnuplot_text("change of " + figure.metric_name + " per tenfold " + figure.x_name)
     << ".\"\\n\"."
     << quote_gnuplot_text("(bar: " + level_percent + " bootstrap interval over replicates)")
     << "\n"
     << padded_range("x", x, false) << "set yrange [-0.7:" << number(rows - 0.3) << "]\n"
     << "set ylabel " << quote_gnuplot_text(figure.factor.split() ? figure.factor.key : "") << "\n"
     << "set lmargin 16\nset bmargin 5\nset rmargin at screen 0.52\nunset key\nunset mytics\nset "
        "grid noytics\n"
     << "set arrow from 0, graph 0 to 0, graph 1 nohead ls 20\n";
  gp << "set ytics (";
  for (int k = 0; k < rows; ++k) {
    gp << (k ? ", " : "") << quote_gnuplot_tic_label(level_name(figure, figure.rows[k].level))
       << " " << (rows - 1 - k);
  }
  gp << ")\n";
  for (int k = 0; k < rows; ++k) {
    gp << "set label " << quote_gnuplot_text(row_words(figure.rows[k], figure.z_threshold))
       << " at screen 0.54, first " << (rows - 1 - k) << " left\n";
  }
  gp << "plot NaN notitle";
  std::vector<std::vector<std::vector<double>>> blocks;
  for (int k = 0; k < rows; ++k) {
    const TrendRow& row = figure.rows[k];
    if (!std::isfinite(row.slope)) continue;
    const double low = std::isfinite(row.low) ? row.low : row.slope;
    const double high = std::isfinite(row.high) ? row.high : row.slope;
    gp << ", '-' using 1:2:3:4 with xerrorbars ls "
       << level_style(figure.factor.split() ? row.level : 0) << " ps 1.6 notitle";
    blocks.push_back({{row.slope, static_cast<double>(rows - 1 - k), low, high}});
  }
  gp << "\n";
  for (const auto& block : blocks) gp.send1d(block);
  return script.finish();
}

}  // namespace allocsim::plots
