// Price and marginal-error trajectories of one run over its rounds.
#include <algorithm>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

constexpr std::size_t kMaxNamedPartners = 8;
// Errors below this are rounding noise of marginals met exactly; a series
// that never exceeds it is named in the key instead of drawn.
constexpr double kExactError = 1e-12;

using Rows = std::vector<std::vector<double>>;

// (round, value) rows; values that are not positive are left out when `positive_only`.
Rows series_rows(const std::vector<double>& rounds, const std::vector<double>& values,
                 bool positive_only) {
  Rows rows;
  for (std::size_t k = 0; k < rounds.size() && k < values.size(); ++k) {
    if (!std::isfinite(values[k]) || (positive_only && !(values[k] > kExactError))) continue;
    rows.push_back({rounds[k], values[k]});
  }
  return rows;
}

void price_panel(Gnuplot& gp, const Trajectories& figure) {
  const std::size_t partners = figure.prices.size();
  const bool named = partners <= kMaxNamedPartners && figure.partner_labels.size() == partners;
  gp << "set title "
     << quote_gnuplot_text("prices, one line per partner (" + std::to_string(partners) + ")")
     << "\n"
     << "set ylabel " << markup("price {/Symbol l}_j  (gain units)") << "\n"
     << (named ? "set key outside right top vertical\n" : "unset key\n") << "set rmargin "
     << (named ? "-1" : "4") << "\nplot ";
  for (std::size_t j = 0; j < partners; ++j) {
    gp << (j ? ", " : "") << "'-' using 1:2 with lines ls " << (j % 8 + 1) << " lw 1.2 "
       << (named ? "title " + quote_gnuplot_text(figure.partner_labels[j]) : "notitle");
  }
  gp << "\n";
  for (const auto& prices : figure.prices) gp.send1d(series_rows(figure.rounds, prices, false));
}

// The y range of the error panel, with two decades of headroom for the key.
std::string error_range(const Rows& a, const Rows& b) {
  std::vector<double> values;
  for (const Rows* rows : {&a, &b}) {
    for (const auto& row : *rows) values.push_back(row[1]);
  }
  const auto [low, high] = std::minmax_element(values.begin(), values.end());
  return "set yrange [" + number(*low / 2) + ":" + number(*high * 300) + "]\n";
}

// One error series: drawn, named as exact (all below kExactError), or absent.
void error_series(Gnuplot& gp, std::string& sep, const std::vector<double>& given, const Rows& rows,
                  int style, const std::string& title) {
  if (given.empty()) return;
  gp << sep << (rows.empty() ? "NaN" : "'-' using 1:2") << " with lines ls " << style << " title "
     << markup(title + (rows.empty() ? "  (below 10^{-12} in every window)" : ""));
  sep = ", ";
}

void error_panel(Gnuplot& gp, const Trajectories& figure, const Rows& rows_error,
                 const Rows& columns_error) {
  gp << "set title 'marginal errors of each snapshot window'\n"
     << "set ylabel " << markup("L1 error (shares)") << "\n"
     << "set logscale y\nset format y '10^{%L}'\nset key inside top right\nset rmargin 4\n"
     << error_range(rows_error, columns_error) << "plot ";
  std::string sep;
  error_series(gp, sep, figure.row_error, rows_error, 1, "budgets  ||P1 - r||_1");
  error_series(gp, sep, figure.column_error, columns_error, 2, "capacities  ||P^T1 - c||_1");
  gp << "\n";
  if (!rows_error.empty()) gp.send1d(rows_error);
  if (!columns_error.empty()) gp.send1d(columns_error);
}

}  // namespace

std::string draw_trajectories(const Trajectories& figure, const std::string& stem,
                              const FigureOptions& options) {
  if (figure.rounds.empty()) throw InputError("trajectories", "no rounds to draw");
  for (const auto& prices : figure.prices) {
    if (prices.size() != figure.rounds.size()) {
      throw InputError("trajectories", "a price series has " + std::to_string(prices.size()) +
                                           " values for " + std::to_string(figure.rounds.size()) +
                                           " rounds");
    }
  }
  const Rows rows_error = series_rows(figure.rounds, figure.row_error, true);
  const Rows columns_error = series_rows(figure.rounds, figure.column_error, true);
  const bool errors = !rows_error.empty() || !columns_error.empty();
  if (figure.prices.empty() && !errors)
    throw InputError("trajectories", "neither prices nor marginal errors to draw");
  const int panels = (figure.prices.empty() ? 0 : 1) + (errors ? 1 : 0);

  FigureScript script(stem, options, 1000, panels == 2 ? 800 : 600);
  Gnuplot& gp = script.gp();
  gp << "set multiplot layout " << panels << ",1 title " << quote_gnuplot_text(figure.title)
     << " font '" << script.title_font() << "'\n"
     << "set xlabel " << markup("round {/:Italic t}") << "\n"
     << "set lmargin 12\n";
  if (!figure.prices.empty()) price_panel(gp, figure);
  if (errors) error_panel(gp, figure, rows_error, columns_error);
  return script.finish();
}

}  // namespace allocsim::plots
