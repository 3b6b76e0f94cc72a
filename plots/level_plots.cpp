#include "level_plots.hpp"

#include <algorithm>
#include <set>

namespace allocsim::plots {
namespace {

int panel_columns(std::size_t panels) {
  if (panels <= 3) return static_cast<int>(panels);
  return panels == 4 ? 2 : 3;
}

int panel_rows(std::size_t panels) {
  const int columns = panel_columns(panels);
  return static_cast<int>((panels + static_cast<std::size_t>(columns) - 1) /
                          static_cast<std::size_t>(columns));
}

// Panels: pixels above the panels (figure title and panel title), below
// them (tic labels and x label), between two rows, per panel; the legend's
// column at the right.
constexpr int kTop = 90, kBottom = 80, kBetweenRows = 130, kPanelHeight = 330, kLegendWidth = 380;

int panels_height(std::size_t panels) {
  const int rows = panel_rows(panels);
  return kTop + rows * kPanelHeight + (rows - 1) * kBetweenRows + kBottom;
}

}  // namespace

int level_style(int level) { return 1 + (level < 0 ? 0 : level % 8); }

std::vector<Point> points_of_level(const std::vector<Point>& points, int level) {
  if (level < 0) return points;
  std::vector<Point> out;
  for (const auto& p : points)
    if (p.level == level) out.push_back(p);
  return out;
}

std::vector<int> levels_with_points(const std::vector<Point>& points) {
  std::set<int> levels;
  for (const auto& p : points) levels.insert(p.level);
  return {levels.begin(), levels.end()};
}

bool drawn_in_panels(const Factor& factor) { return factor.panels && factor.split(); }

ImageSize image_size(const Factor& factor, std::size_t panels, ImageSize single) {
  if (!drawn_in_panels(factor)) {
    if (factor.split()) single.width += 200;  // the legend at the right
    return single;
  }
  return {400 * panel_columns(panels) + 100 + kLegendWidth, panels_height(panels)};
}

std::string y_label(const std::string& literal) {
  return "y_label_text = " + literal + "\nset ylabel y_label_text\n";
}

std::string legend_command(const Factor& factor) {
  if (!factor.split()) return "set key outside bottom center horizontal\nset bmargin 7\n";
  return "set key outside right top vertical Left reverse title " + quote_gnuplot_text(factor.key) +
         " left\n";
}

void draw_plots(FigureScript& script, const std::string& title, const Factor& factor,
                const std::vector<int>& levels, const std::string& legend,
                const std::function<void(int level)>& draw) {
  Gnuplot& gp = script.gp();
  if (!drawn_in_panels(factor)) {
    gp << "set title " << quote_gnuplot_text(title) << " font '" << script.title_font() << "'\n"
       << legend;
    draw(-1);
    return;
  }
  const int rows = panel_rows(levels.size());
  const double height = panels_height(levels.size());
  const double width = script.width_pixels();
  gp << "set multiplot layout " << rows << "," << panel_columns(levels.size()) << " title "
     << quote_gnuplot_text(title) << " font '" << script.title_font() << "' margins "
     << number(90 / width) << "," << number(1 - kLegendWidth / width) << ","
     << number(kBottom / height) << "," << number(1 - kTop / height) << " spacing "
     << number(80 / width) << "," << number(kBetweenRows / height) << "\n"
     << "set key at screen " << number(1 - (kLegendWidth - 10) / width) << ", screen "
     << number(1 - kTop / height) << " left top vertical Left reverse\n";
  for (std::size_t k = 0; k < levels.size(); ++k) {
    const auto level = static_cast<std::size_t>(levels[k]);
    const std::string name = level < factor.levels.size() ? factor.levels[level] : "?";
    gp << "set title " << quote_gnuplot_text(factor.key + " = " + name) << "\n";
    if (k == 1) gp << "unset key\n";
    gp << (k % static_cast<std::size_t>(panel_columns(levels.size())) == 0
               ? "set ylabel y_label_text\n"
               : "unset ylabel\n");
    draw(levels[k]);
  }
  gp << "unset multiplot\n";
}

}  // namespace allocsim::plots
