// Allocation heatmaps side by side on one colour scale.
#include <algorithm>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {
namespace {

constexpr std::size_t kMaxPanels = 4;
constexpr std::size_t kMaxTickLabels = 60;
constexpr std::size_t kSmallTickLabels = 30;  // above: a smaller font
constexpr std::size_t kTickLabelChars = 16;   // longer names are cut, with an ellipsis
// Layout: fractions of the canvas height, pixels across (so the colour bar
// and its label keep their room at any width); named ticks need more room.
constexpr double kTop = 0.83;
constexpr double kGapPixels = 30, kColourBarPixels = 18, kColourBarReservePixels = 165;

void check(const AllocationHeatmaps& figure) {
  if (figure.panels.empty() || figure.panels.size() > kMaxPanels) {
    throw InputError("allocation heatmaps",
                     "need 1 to 4 panels, got " + std::to_string(figure.panels.size()));
  }
  const Matrix& first = figure.panels.front().values;
  for (const auto& panel : figure.panels) {
    if (panel.values.rows() != first.rows() || panel.values.cols() != first.cols() ||
        first.size() == 0) {
      throw InputError("allocation heatmaps",
                       "panel '" + panel.title + "' is " + std::to_string(panel.values.rows()) +
                           "x" + std::to_string(panel.values.cols()) + ", expected " +
                           std::to_string(first.rows()) + "x" + std::to_string(first.cols()));
    }
  }
  if (!(figure.smallest_share > 0 && figure.smallest_share < 1)) {
    throw InputError("smallest_share", "must be in (0, 1)");
  }
}

// The display order: the given one when it is a permutation, else by degree.
Ordering display_order(const AllocationHeatmaps& figure) {
  const Matrix& first = figure.panels.front().values;
  auto is_permutation = [](std::vector<long> order, long size) {
    if (static_cast<long>(order.size()) != size) return false;
    std::sort(order.begin(), order.end());
    for (long k = 0; k < size; ++k) {
      if (order[static_cast<std::size_t>(k)] != k) return false;
    }
    return true;
  };
  if (figure.ordering.rows.empty() && figure.ordering.columns.empty())
    return degree_ordering(first);
  if (!is_permutation(figure.ordering.rows, first.rows()) ||
      !is_permutation(figure.ordering.columns, first.cols())) {
    throw InputError("allocation heatmaps",
                     "the ordering is not a permutation of the rows and columns");
  }
  return figure.ordering;
}

Matrix shares(const Matrix& values) {
  const double total = values.sum();
  return total > 0 ? Matrix(values / total) : values;
}

// (column position, row position, share) from 1, in display order.
std::vector<std::vector<double>> cells(const Matrix& share, const Ordering& order) {
  std::vector<std::vector<double>> out;
  out.reserve(static_cast<std::size_t>(share.size()));
  for (std::size_t i = 0; i < order.rows.size(); ++i) {
    for (std::size_t j = 0; j < order.columns.size(); ++j) {
      const double v = share(order.rows[i], order.columns[j]);
      out.push_back(
          {static_cast<double>(j + 1), static_cast<double>(i + 1), std::isfinite(v) ? v : 0.0});
    }
  }
  return out;
}

bool named(const std::vector<std::string>& labels, const std::vector<long>& order) {
  return labels.size() == order.size() && labels.size() <= kMaxTickLabels;
}

// At most `chars` UTF-8 characters, the last one an ellipsis when cut.
std::string shortened(const std::string& text, std::size_t chars) {
  std::vector<std::size_t> starts;  // byte offset of each character
  for (std::size_t k = 0; k < text.size(); ++k) {
    if ((static_cast<unsigned char>(text[k]) & 0xC0) != 0x80) starts.push_back(k);
  }
  if (starts.size() <= chars) return text;
  return text.substr(0, starts[chars - 1]) + "\u2026";
}

// Tick labels from names, in display order, or plain positions.
std::string tick_command(const char* axis, const std::vector<std::string>& labels,
                         const std::vector<long>& order, bool show) {
  std::string command = std::string("set ") + axis + "tics";
  if (!show) return command + " autofreq format ''\n";
  if (!named(labels, order)) return command + " autofreq format '%g'\n";
  const std::string font = order.size() > kSmallTickLabels ? "',7'" : "',9'";
  command +=
      std::string(axis) == "x" ? " rotate by 60 right font " + font + " (" : " font " + font + " (";
  for (std::size_t k = 0; k < order.size(); ++k) {
    command += (k ? ", " : "") +
               quote_gnuplot_tic_label(
                   shortened(labels[static_cast<std::size_t>(order[k])], kTickLabelChars)) +
               " " + std::to_string(k + 1);
  }
  return command + ")\n";
}

}  // namespace

std::string draw_allocation_heatmaps(const AllocationHeatmaps& figure, const std::string& stem,
                                     const FigureOptions& options) {
  check(figure);
  const Ordering order = display_order(figure);
  const std::size_t k = figure.panels.size();
  std::vector<Matrix> panel_shares;
  double largest = 0;
  for (const auto& panel : figure.panels) {
    panel_shares.push_back(shares(panel.values));
    largest = std::max(largest, panel_shares.back().maxCoeff());
  }
  if (!(largest > 0)) largest = 1;
  const double floor = figure.smallest_share * largest;
  const long n = figure.panels.front().values.rows(), m = figure.panels.front().values.cols();
  const bool named_columns = named(figure.column_labels, order.columns);
  const double bottom = named_columns ? 0.27 : 0.15;

  FigureScript script(stem, options, 280 + 360 * static_cast<int>(k), named_columns ? 720 : 640);
  Gnuplot& gp = script.gp();
  const double pixel = 1.0 / script.width_pixels();
  const double left = (named(figure.row_labels, order.rows) ? 210 : 85) * pixel;
  const double panels_right = 1 - kColourBarReservePixels * pixel, gap = kGapPixels * pixel;
  gp << "set multiplot title " << quote_gnuplot_text(figure.title) << " font '"
     << script.title_font() << "'\n"
     << "set xrange [0.5:" << number(m + 0.5) << "]\nset yrange [" << number(n + 0.5) << ":0.5]\n"
     << "set tmargin at screen " << number(kTop) << "\nset bmargin at screen " << number(bottom)
     << "\n"
     << "unset grid\nunset key\nset border 15\nset tics front\nunset mxtics\nunset mytics\n"
     << "unset xlabel\n"
     << "set label 1 " << quote_gnuplot_text("partners j, by " + figure.ordering_name)
     << " at screen " << number((left + panels_right) / 2) << ", screen 0.025 center\n";
  if (figure.log_colour_scale) {
    gp << "set logscale cb\nset cbrange [" << number(floor) << ":" << number(largest) << "]\n"
       << "set format cb '10^{%L}'\n"
       << "set cblabel "
       << (figure.colour_label.empty() ? markup("share of all units (log scale; white: below " +
                                                number(figure.smallest_share) + " of the largest)")
                                       : quote_gnuplot_text(figure.colour_label))
       << "\n";
  } else {
    gp << "set cbrange [0:" << number(largest) << "]\nset format cb '%g'\n"
       << "set cblabel "
       << (figure.colour_label.empty() ? markup("share of all units (white: none)")
                                       : quote_gnuplot_text(figure.colour_label))
       << "\n";
  }
  const std::string drawn =
      figure.log_colour_scale ? "($3 >= " + number(floor) + " ? $3 : NaN)" : "($3 > 0 ? $3 : NaN)";
  const double width =
      (panels_right - left - gap * static_cast<double>(k - 1)) / static_cast<double>(k);
  for (std::size_t p = 0; p < k; ++p) {
    const double panel_left = left + static_cast<double>(p) * (width + gap);
    gp << "set lmargin at screen " << number(panel_left) << "\nset rmargin at screen "
       << number(panel_left + width) << "\n"
       << "set title " << quote_gnuplot_text(figure.panels[p].title) << "\n"
       << tick_command("x", figure.column_labels, order.columns, true)
       << tick_command("y", figure.row_labels, order.rows, p == 0) << "set ylabel "
       << (p == 0 ? quote_gnuplot_text("agents i, by " + figure.ordering_name) : "''") << "\n";
    if (p + 1 == k && figure.colour_bar) {
      gp << "set colorbox user origin screen " << number(panels_right + gap * 0.6) << ", screen "
         << number(bottom) << " size screen " << number(kColourBarPixels * pixel) << ", screen "
         << number(kTop - bottom) << "\n";
    } else {
      gp << "unset colorbox\n";
    }
    gp << "plot '-' using 1:2:" << drawn << " with image notitle\n";
    gp.send1d(cells(panel_shares[p], order));
  }
  return script.finish();
}

}  // namespace allocsim::plots
