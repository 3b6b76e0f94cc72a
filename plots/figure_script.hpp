// The gnuplot script of one figure and the drawing of it (private to plots/).
//
// A FigureScript opens the script "<stem>.gp" (a temporary name beside it
// while drawing), writes the terminal, the output name and the embedded
// style, and lets the figure code write its commands and inline data
// (gnuplot-iostream send1d). finish() either keeps the script (script-only)
// or runs gnuplot on it, checks exit status and image, renames the image onto
// "<stem>.<format>" and removes the script. Without finish() nothing is left.
#pragma once

#include <gnuplot-iostream.h>

#include <memory>
#include <string>
#include <vector>

#include "allocsim/plots/figures.hpp"

namespace allocsim::plots {

class FigureScript {
 public:
  // default_width/height apply when options leave them at 0.
  FigureScript(const std::string& stem, const FigureOptions& options, int default_width,
               int default_height);
  ~FigureScript();
  FigureScript(const FigureScript&) = delete;
  FigureScript& operator=(const FigureScript&) = delete;

  Gnuplot& gp() { return *gp_; }
  int width_pixels() const { return width_; }
  // A title/label font one step larger than the base font, as "Sans,15".
  std::string title_font() const;

  // Draws (or keeps the script); returns the path written.
  std::string finish();

 private:
  FigureOptions options_;
  std::string image_path_, script_path_, script_temporary_, image_temporary_;
  std::unique_ptr<Gnuplot> gp_;
  int width_ = 0;
  bool finished_ = false;
};

// A number as gnuplot reads it, short and locale-free ("0.06", "1e-05").
std::string number(double value);

// A gnuplot string literal of markup the figure code wrote itself (symbols,
// sub- and superscripts): quoted, not escaped. Must hold no ' and no newline.
std::string markup(const std::string& text);

// Sorts points by x, drops those with non-finite x or y.
std::vector<Point> sorted_finite(std::vector<Point> points);

// "set xrange [a:b]" (or another axis) around the values with a margin, so
// no point sits on the border: a factor 1.25 on log axes, 4% of the span on
// linear ones.
std::string padded_range(const char* axis, const std::vector<double>& values, bool log);

// True when every x is > 0 and they span at least a factor `ratio`.
bool wants_log_axis(const std::vector<double>& values, double ratio = 20);

}  // namespace allocsim::plots
