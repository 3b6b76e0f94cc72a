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
  const int columns = panel_columns(panels);
  return {std::max(1000, 380 * columns + 330), 120 + 430 * panel_rows(panels)};
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
  const double top = 1.0 - 90.0 / (120 + 430 * rows);  // room for the figure's title
  gp << "set multiplot layout " << rows << "," << panel_columns(levels.size()) << " title "
     << quote_gnuplot_text(title) << " font '" << script.title_font() << "' margins 0.07,0.76,"
     << number(0.5 / (4.3 * rows)) << "," << number(top) << " spacing 0.07,"
     << number(0.7 / (4.3 * rows)) << "\n"
     << "set key at screen 0.78, screen " << number(top) << " left top vertical Left reverse\n";
  for (std::size_t k = 0; k < levels.size(); ++k) {
    const auto level = static_cast<std::size_t>(levels[k]);
    const std::string name = level < factor.levels.size() ? factor.levels[level] : "?";
    gp << "set title " << quote_gnuplot_text(factor.key + " = " + name) << "\n";
    if (k == 1) gp << "unset key\n";
    draw(levels[k]);
  }
  gp << "unset multiplot\n";
}

}  // namespace allocsim::plots
