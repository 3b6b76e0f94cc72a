#include "figure_script.hpp"

#include <spawn.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>
#include <fstream>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <sstream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/output_file.hpp"
#include "plot_style_text.hpp"  // kPlotStyle: plots/style.gp, embedded at build time

extern char** environ;

namespace allocsim::plots {
namespace {

std::string terminal_line(const FigureOptions& options, int width, int height) {
  const std::string font = "'Sans," + std::to_string(options.font_size_points) + "'";
  std::ostringstream out;
  switch (options.format) {
    case ImageFormat::png:
      out << "set terminal pngcairo size " << width << "," << height << " enhanced font " << font
          << " background rgb 'white'";
      break;
    case ImageFormat::svg:
      out << "set terminal svg size " << width << "," << height << " enhanced font " << font
          << " background rgb 'white'";
      break;
    case ImageFormat::pdf:
      out << "set terminal pdfcairo size " << number(width / 100.0) << "in,"
          << number(height / 100.0) << "in enhanced font " << font;
      break;
  }
  return out.str();
}

// A path as a single-quoted gnuplot string (no enhanced-text escapes: file
// names are not drawn). Newlines cannot be quoted, so they are refused.
std::string path_literal(const std::string& path) {
  if (path.find_first_of("\n\r") != std::string::npos) {
    throw InputError(path, "a figure path cannot contain a line break");
  }
  std::string quoted = "'";
  for (const char c : path) quoted += (c == '\'') ? std::string("''") : std::string(1, c);
  return quoted + "'";
}

std::string default_gnuplot() {
#ifdef ALLOCSIM_GNUPLOT
  if (::access(ALLOCSIM_GNUPLOT, X_OK) == 0) return ALLOCSIM_GNUPLOT;
#endif
  return "gnuplot";
}

// Runs `program script`, waits; returns the exit status (-1: not started or killed).
int run_gnuplot(const std::string& program, const std::string& script) {
  std::vector<char*> argv = {const_cast<char*>(program.c_str()), const_cast<char*>(script.c_str()),
                             nullptr};
  pid_t pid = 0;
  if (::posix_spawnp(&pid, program.c_str(), nullptr, nullptr, argv.data(), environ) != 0) return -1;
  int status = 0;
  while (::waitpid(pid, &status, 0) < 0) {
    if (errno != EINTR) return -1;
  }
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

long file_size(const std::string& path) {
  struct stat info {};
  return ::stat(path.c_str(), &info) == 0 ? static_cast<long>(info.st_size) : -1;
}

}  // namespace

std::string number(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.10g", value);
  return text;
}

std::string markup(const std::string& text) { return "'" + text + "'"; }

std::vector<Point> sorted_finite(std::vector<Point> points) {
  points.erase(
      std::remove_if(points.begin(), points.end(),
                     [](const Point& p) { return !std::isfinite(p.x) || !std::isfinite(p.y); }),
      points.end());
  std::stable_sort(points.begin(), points.end(),
                   [](const Point& a, const Point& b) { return a.x < b.x; });
  return points;
}

bool wants_log_axis(const std::vector<double>& values, double ratio) {
  if (values.empty()) return false;
  double low = values.front(), high = values.front();
  for (const double v : values) {
    if (!(v > 0) || !std::isfinite(v)) return false;
    low = std::min(low, v);
    high = std::max(high, v);
  }
  return high >= ratio * low;
}

std::string padded_range(const char* axis, const std::vector<double>& values, bool log) {
  double low = 0, high = 0;
  bool any = false;
  for (const double v : values) {
    if (!std::isfinite(v) || (log && !(v > 0))) continue;
    low = any ? std::min(low, v) : v;
    high = any ? std::max(high, v) : v;
    any = true;
  }
  if (!any) return "";
  if (log) {
    low /= 1.25, high *= 1.25;
  } else {
    const double pad = high > low ? 0.04 * (high - low) : (low != 0 ? 0.1 * std::abs(low) : 1.0);
    low -= pad, high += pad;
  }
  return std::string("set ") + axis + "range [" + number(low) + ":" + number(high) + "]\n";
}

// A PNG ends with its IEND chunk, an SVG with </svg>, a PDF with %%EOF: an
// image cut short (a full disk) lacks its end.
static bool image_is_complete(const std::string& path, ImageFormat format) {
  std::ifstream in(path, std::ios::binary);
  in.seekg(0, std::ios::end);
  const std::streamoff size = in.tellg();
  const std::streamoff tail_size = std::min<std::streamoff>(size, 64);
  std::string tail(static_cast<std::size_t>(tail_size), '\0');
  in.seekg(size - tail_size);
  in.read(tail.data(), tail_size);
  switch (format) {
    case ImageFormat::png:
      return tail.find("IEND") != std::string::npos;
    case ImageFormat::svg:
      return tail.find("</svg>") != std::string::npos;
    case ImageFormat::pdf:
      return tail.find("%%EOF") != std::string::npos;
  }
  return true;
}

FigureScript::FigureScript(const std::string& stem, const FigureOptions& options, int default_width,
                           int default_height)
    : options_(options),
      image_path_(stem + "." + file_extension(options.format)),
      script_path_(stem + ".gp") {
  options_.validate();
  script_temporary_ = temporary_name_for(script_path_);
  image_temporary_ = temporary_name_for(image_path_);
  try {
    gp_ = std::make_unique<Gnuplot>(">" + script_temporary_);
  } catch (const std::ios_base::failure&) {
    throw InputError(script_path_, std::string("cannot be written (") + std::strerror(errno) +
                                       "); check that the folder exists and is writable");
  }
  const int width = options_.width_pixels > 0 ? options_.width_pixels : default_width;
  width_ = width;
  const int height = options_.height_pixels > 0 ? options_.height_pixels : default_height;
  Gnuplot& out = *gp_;
  out << "# allocsim figure " << path_literal(image_path_) << "\n"
      << terminal_line(options_, width, height) << "\n"
      << "set output " << path_literal(options_.script_only ? image_path_ : image_temporary_)
      << "\n"
      << "set encoding utf8\n"
      << kPlotStyle << "\n";
}

FigureScript::~FigureScript() {
  if (finished_) return;
  gp_.reset();
  std::remove(script_temporary_.c_str());
  std::remove(image_temporary_.c_str());
}

std::string FigureScript::title_font() const {
  return "Sans," + std::to_string(options_.font_size_points + 2);
}

std::string FigureScript::finish() {
  *gp_ << "unset multiplot\nunset output\n";
  const bool written = static_cast<bool>(*gp_);
  gp_.reset();  // flushes and closes the script
  if (!written)
    throw WriteError(script_path_,
                     write_failure_cause(script_path_, "the script is incomplete", errno));
  if (options_.script_only) {
    if (std::rename(script_temporary_.c_str(), script_path_.c_str()) != 0) {
      throw InputError(script_path_,
                       std::string("could not be written (") + std::strerror(errno) + ")");
    }
    finished_ = true;
    return script_path_;
  }
  const std::string program =
      options_.gnuplot_program.empty() ? default_gnuplot() : options_.gnuplot_program;
  const int status = run_gnuplot(program, script_temporary_);
  if (status != 0) {
    throw InputError(image_path_, status < 0
                                      ? "gnuplot ('" + program + "') could not be run"
                                      : "gnuplot failed (exit status " + std::to_string(status) +
                                            "; its messages are above)");
  }
  if (file_size(image_temporary_) <= 0 || !image_is_complete(image_temporary_, options_.format)) {
    const int error = errno;
    std::remove(image_temporary_.c_str());
    throw WriteError(image_path_,
                     write_failure_cause(image_path_, "gnuplot wrote no complete image", error));
  }
  if (std::rename(image_temporary_.c_str(), image_path_.c_str()) != 0) {
    throw InputError(image_path_,
                     std::string("could not be written (") + std::strerror(errno) + ")");
  }
  std::remove(script_temporary_.c_str());
  finished_ = true;
  return image_path_;
}

}  // namespace allocsim::plots
