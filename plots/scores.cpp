// An estimator's score card on a benchmark set: estimates, errors and coverage.
#include <algorithm>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

struct CardPanels {
  std::vector<std::string> series;  // labels in first-seen order
  std::vector<std::vector<std::vector<double>>>
      points;  // per series: {truth, estimate, ratio, units}
  long off_scale = 0, unanswered = 0;
  std::vector<double> truths, estimates, ratios, units;
};

CardPanels card_panels(const EstimatorScoreCard& figure) {
  CardPanels p;
  for (const auto& c : figure.cases) {
    if (!(c.true_epsilon > 0) || !std::isfinite(c.true_epsilon)) continue;
    if (std::isnan(c.estimate)) {
      ++p.unanswered;
      continue;
    }
    if (!(c.estimate > 0) || !std::isfinite(c.estimate)) {
      ++p.off_scale;
      continue;
    }
    auto it = std::find(p.series.begin(), p.series.end(), c.series);
    if (it == p.series.end()) {
      p.series.push_back(c.series);
      p.points.emplace_back();
      it = p.series.end() - 1;
    }
    const double ratio = c.estimate / c.true_epsilon;
    const double units = std::isfinite(c.units) && c.units > 0 ? c.units : kNoValue;
    p.points[static_cast<std::size_t>(it - p.series.begin())].push_back(
        {c.true_epsilon, c.estimate, ratio, units});
    p.truths.push_back(c.true_epsilon);
    p.estimates.push_back(c.estimate);
    p.ratios.push_back(ratio);
    if (!std::isnan(units)) p.units.push_back(units);
  }
  return p;
}

std::string log_axis(const char* axis, const std::vector<double>& values) {
  std::string text = std::string("set logscale ") + axis + "\n" + padded_range(axis, values, true);
  if (wants_log_axis(values, 10)) text += std::string("set format ") + axis + " '10^{%L}'\n";
  return text;
}

// One scatter panel: column `y` against column `x` of every series.
void scatter(Gnuplot& gp, const CardPanels& p, int x, int y, const std::string& reference) {
  gp << "plot " << reference;
  std::vector<std::vector<std::vector<double>>> blocks;
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    std::vector<std::vector<double>> rows;
    for (const auto& row : p.points[k])
      if (std::isfinite(row[static_cast<std::size_t>(x)]))
        rows.push_back({row[static_cast<std::size_t>(x)], row[static_cast<std::size_t>(y)]});
    if (rows.empty()) continue;
    gp << ", '-' using 1:2 with points ls " << (k % 8 + 1) << " ps 0.6 title "
       << quote_gnuplot_text(p.series[k]);
    blocks.push_back(std::move(rows));
  }
  gp << "\n";
  for (const auto& block : blocks) gp.send1d(block);
}

}  // namespace

std::string draw_estimator_score_card(const EstimatorScoreCard& figure, const std::string& stem,
                                      const FigureOptions& options) {
  const CardPanels p = card_panels(figure);
  if (p.truths.empty())
    throw InputError("estimator scores",
                     "no answered case with a positive finite estimate to draw");
  FigureScript script(stem, options, 1400, 1100);
  Gnuplot& gp = script.gp();
  gp << "set multiplot layout 2,2 title " << quote_gnuplot_text(figure.title) << " font '"
     << script.title_font() << "'\nset key top left\n";
  if (p.off_scale > 0 || p.unanswered > 0) {
    std::string note;
    if (p.off_scale > 0)
      note += std::to_string(p.off_scale) + " estimates of 0 or infinity not shown";
    if (p.unanswered > 0)
      note += std::string(note.empty() ? "" : "; ") + std::to_string(p.unanswered) + " unanswered";
    gp << "set label 1 " << quote_gnuplot_text(note) << " at screen 0.99, screen 0.975 right\n";
  }
  std::vector<double> both = p.truths;
  both.insert(both.end(), p.estimates.begin(), p.estimates.end());
  gp << "set title 'estimate against truth'\n"
     << "set xlabel " << markup("true {/Symbol e}  (gain units)") << "\n"
     << "set ylabel " << markup("estimated {/Symbol e}") << "\n"
     << log_axis("x", both) << log_axis("y", both);
  scatter(gp, p, 0, 1, "x with lines ls 20 title 'identity'");
  gp << "unset label 1\n";

  const std::string ratio_label = markup("{/Symbol e}_{est} / {/Symbol e}  (relative error + 1)");
  gp << "unset key\nset title 'error against truth'\nset ylabel " << ratio_label << "\n"
     << log_axis("x", p.truths) << log_axis("y", p.ratios);
  scatter(gp, p, 0, 2, "1 with lines ls 20 notitle");

  gp << "set title 'error against units'\nset xlabel 'units in the allocation'\n";
  if (p.units.empty()) {
    gp << "unset logscale x\nset xrange [0:1]\nset label 2 'units not known' at graph 0.5, graph "
          "0.5 center\n"
       << "plot 1 with lines ls 20 notitle\nunset label 2\n";
  } else {
    gp << log_axis("x", p.units);
    scatter(gp, p, 3, 2, "1 with lines ls 20 notitle");
  }

  gp << "set title 'coverage of the intervals by quintile band'\nunset logscale xy\nset format x "
        "'%g'\n"
     << "set format y '%g'\nset xlabel 'quintile band (1 = lowest)'\n"
     << "set ylabel 'share of intervals that cover the truth'\nset xrange [0.5:5.5]\nset yrange "
        "[0:1.05]\n"
     << "set xtics 1\nset key right center\n"
     << "plot " << number(figure.nominal_coverage) << " with lines ls 20 title "
     << quote_gnuplot_text("nominal " + number(100 * figure.nominal_coverage) + "%");
  std::vector<std::string> axes;
  for (const auto& b : figure.bands)
    if (std::find(axes.begin(), axes.end(), b.axis) == axes.end()) axes.push_back(b.axis);
  std::vector<std::vector<std::vector<double>>> blocks;
  for (std::size_t k = 0; k < axes.size(); ++k) {
    std::vector<std::vector<double>> rows;
    for (const auto& b : figure.bands)
      if (b.axis == axes[k] && std::isfinite(b.coverage))
        rows.push_back({static_cast<double>(b.band), b.coverage});
    std::sort(rows.begin(), rows.end());
    if (rows.empty()) continue;
    gp << ", '-' using 1:2 with linespoints ls " << (k % 8 + 1) << " title "
       << quote_gnuplot_text("by " + axes[k]);
    blocks.push_back(std::move(rows));
  }
  gp << "\n";
  for (const auto& block : blocks) gp.send1d(block);
  gp << "unset multiplot\n";
  return script.finish();
}

}  // namespace allocsim::plots
