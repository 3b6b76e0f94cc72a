// The levels of a factor on a figure (private to plots/): which style each
// level gets, and the layout of one plot with a series per level or of one
// panel per level with shared axes and one legend at the right.
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "allocsim/plots/figures.hpp"
#include "figure_script.hpp"

namespace allocsim::plots {

// The line style of level k in a series plot: the 8 styles of style.gp,
// then repeating. In panels every level is drawn with style 1.
int level_style(int level);

// The points of one level (all points when level < 0).
std::vector<Point> points_of_level(const std::vector<Point>& points, int level);

// The levels that have at least one point, ascending.
std::vector<int> levels_with_points(const std::vector<Point>& points);

// True when the figure is one panel per level.
bool drawn_in_panels(const Factor& factor);

// Image size of a figure: `single` for one plot; panels get 3 columns at
// most and ~430 pixels per row.
struct ImageSize {
  int width = 1000, height = 700;
};
ImageSize image_size(const Factor& factor, std::size_t panels, ImageSize single);

// Draws the figure's plots: with a factor in panels, one panel per entry of
// `levels` (draw(level), titled "key = level"), on a multiplot titled
// `title` with the legend of the first panel at the right; otherwise one
// plot titled `title` (draw(-1)). Axis ranges set before the call are shared
// by every panel. `legend` is the key command of a single plot.
void draw_plots(FigureScript& script, const std::string& title, const Factor& factor,
                const std::vector<int>& levels, const std::string& legend,
                const std::function<void(int level)>& draw);

// The y label of a figure drawn by draw_plots (a gnuplot string literal):
// kept in a variable so that panels show it in their first column only.
std::string y_label(const std::string& literal);

// The key command of a single plot: below the plot when it has no factor,
// at the right (titled by the factor's key) with one entry per level.
std::string legend_command(const Factor& factor);

}  // namespace allocsim::plots
