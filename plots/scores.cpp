// An estimator's relative error and interval coverage on benchmark sets.
#include <algorithm>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

using Rows = std::vector<std::vector<double>>;

std::vector<BenchmarkScore> sorted_scores(std::vector<BenchmarkScore> scores) {
  scores.erase(std::remove_if(scores.begin(), scores.end(),
                              [](const BenchmarkScore& s) { return !(s.true_epsilon > 0) || !std::isfinite(s.true_epsilon); }),
               scores.end());
  std::stable_sort(scores.begin(), scores.end(),
                   [](const BenchmarkScore& a, const BenchmarkScore& b) { return a.true_epsilon < b.true_epsilon; });
  return scores;
}

Rows error_rows(const std::vector<BenchmarkScore>& scores) {
  Rows rows;
  for (const auto& s : scores) {
    if (!std::isfinite(s.median_relative_error)) continue;
    const double low = std::isfinite(s.quartile_low) ? s.quartile_low : s.median_relative_error;
    const double high = std::isfinite(s.quartile_high) ? s.quartile_high : s.median_relative_error;
    rows.push_back({s.true_epsilon, s.median_relative_error, low, high});
  }
  return rows;
}

Rows coverage_rows(const std::vector<BenchmarkScore>& scores) {
  Rows rows;
  for (const auto& s : scores) {
    if (std::isfinite(s.coverage)) rows.push_back({s.true_epsilon, s.coverage});
  }
  return rows;
}

}  // namespace

std::string draw_estimator_scores(const EstimatorScores& figure, const std::string& stem,
                                  const FigureOptions& options) {
  std::vector<std::vector<BenchmarkScore>> sets;
  std::vector<double> x;
  bool any_coverage = false;
  for (const auto& set : figure.sets) {
    sets.push_back(sorted_scores(set.scores));
    for (const auto& s : sets.back()) {
      x.push_back(s.true_epsilon);
      any_coverage = any_coverage || std::isfinite(s.coverage);
    }
  }
  if (x.empty()) throw InputError("estimator scores", "no benchmark scores to draw");

  FigureScript script(stem, options, 1300, 650);
  Gnuplot& gp = script.gp();
  gp << "set multiplot layout 1," << (any_coverage ? 2 : 1) << " title " << quote_gnuplot_text(figure.title)
     << " font '" << script.title_font() << "'\n"
     << "set xlabel " << markup("true transport temperature {/Symbol e}  (gain units)") << "\n"
     << "set key outside bottom center horizontal\nset bmargin 7\n";
  const bool log = wants_log_axis(x, 10);
  if (log) gp << "set logscale x\nset format x '10^{%L}'\n";
  gp << padded_range("x", x, log);

  gp << "set title 'relative error (median and quartiles)'\n"
     << "set ylabel " << markup("({/Symbol e}_{est} - {/Symbol e}) / {/Symbol e}") << "\n"
     << "plot 0 with lines ls 20 notitle";
  std::vector<Rows> blocks;
  for (std::size_t k = 0; k < sets.size(); ++k) {
    Rows rows = error_rows(sets[k]);
    if (rows.empty()) continue;
    gp << ", '-' using 1:2:3:4 with yerrorlines ls " << (k % 8 + 1) << " title "
       << quote_gnuplot_text(figure.sets[k].label);
    blocks.push_back(std::move(rows));
  }
  gp << "\n";
  for (const auto& block : blocks) gp.send1d(block);
  if (!any_coverage) return script.finish();

  gp << "set title 'coverage of the intervals'\n"
     << "set ylabel 'share of intervals that cover the truth'\nset yrange [0:1.05]\n"
     << "plot " << number(figure.nominal_coverage) << " with lines ls 20 title "
     << quote_gnuplot_text("nominal " + number(100 * figure.nominal_coverage) + "%");
  blocks.clear();
  for (std::size_t k = 0; k < sets.size(); ++k) {
    Rows rows = coverage_rows(sets[k]);
    if (rows.empty()) continue;
    gp << ", '-' using 1:2 with linespoints ls " << (k % 8 + 1) << " title "
       << quote_gnuplot_text(figure.sets[k].label);
    blocks.push_back(std::move(rows));
  }
  gp << "\n";
  for (const auto& block : blocks) gp.send1d(block);
  return script.finish();
}

}  // namespace allocsim::plots
