// Sweep axes of an experiment and the points (runs) they span.
//
// In an experiment file, the [sweep] section holds one line per axis, named
// by the key it varies, plus how axes combine and how many replicates each
// point gets:
//
//   [sweep]
//   dynamics.temperature = log(0.01, 1, 7)   # 7 values from 0.01 to 1, log-spaced
//   scenario.agents = 20..40                 # whole numbers 20, 21, ..., 40
//   dynamics.rule = price, gumbel            # a list (numbers or words)
//   dynamics.price_step = linear(0.2, 1, 5)  # 5 evenly spaced values
//   combine = grid                           # grid (every combination) | zip (k-th with k-th)
//   replicates = 3                           # runs per point, each with its own seed
//
// The values are kept as text; each is checked by the key's own rules when a
// run's settings are built.
#pragma once

#include <string>
#include <utility>
#include <vector>

namespace allocsim {

struct SweepAxis {
  std::string key;                  // "section.key"
  std::vector<std::string> values;  // in sweep order
  std::string where;                // "exp.ini:14", for messages
};

enum class SweepCombine { grid, zip };
std::string to_string(SweepCombine combine);
SweepCombine sweep_combine_from_string(const std::string& text, const std::string& where);

// `text` without leading and trailing blanks and tabs.
std::string trim_blanks(const std::string& text);

// The finite number one item of a specification holds (blanks around it
// allowed); InputError at `where`: "'x' in 'spec' is not a finite number".
double finite_number_in(const std::string& item, const std::string& where, const std::string& spec);

// Expands one axis specification: a list "a, b, c", an integer range
// "first..last" (inclusive, either direction), "linear(start, stop, count)"
// or "log(start, stop, count)" (start, stop > 0). Throws InputError naming
// `where` for a malformed specification or an empty axis.
std::vector<std::string> expand_sweep_values(const std::string& spec, const std::string& where);

// One run of a sweep: the value of every axis, and its replicate number.
struct SweepPoint {
  std::vector<std::pair<std::string, std::string>> settings;  // (key, value) per axis
  long replicate = 0;
};

// Every run, replicates innermost. Grid: the first axis varies slowest.
// Zip: all axes must have the same length (InputError naming the axes
// otherwise). No axes: one point per replicate.
std::vector<SweepPoint> sweep_points(const std::vector<SweepAxis>& axes, SweepCombine combine,
                                     long replicates);

// The [sweep] syntax in a few lines, for --list-keys and --help.
std::string sweep_syntax_help();

}  // namespace allocsim
