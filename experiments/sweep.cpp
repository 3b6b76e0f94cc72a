#include "allocsim/experiments/sweep.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <regex>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

// 12 significant digits: enough for any sweep, and free of rounding noise
// such as 0.30000000000000004.
std::string sweep_number(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.12g", value);
  return buffer;
}

std::vector<std::string> spaced_values(const std::string& kind, const std::smatch& m,
                                       const std::string& where, const std::string& spec) {
  const double start = finite_number_in(m[2], where, spec);
  const double stop = finite_number_in(m[3], where, spec);
  const double count_value = finite_number_in(m[4], where, spec);
  const long count = static_cast<long>(count_value);
  if (count < 1 || count != count_value) {
    throw InputError(where, "the count in '" + spec + "' must be a whole number >= 1");
  }
  if (kind == "log" && !(start > 0 && stop > 0)) {
    throw InputError(where, "log spacing needs start and stop > 0 in '" + spec + "'");
  }
  std::vector<std::string> values;
  for (long k = 0; k < count; ++k) {
    const double t = count == 1 ? 0.0 : static_cast<double>(k) / static_cast<double>(count - 1);
    const double value =
        kind == "log"
            ? std::pow(10.0, std::log10(start) + t * (std::log10(stop) - std::log10(start)))
            : start + t * (stop - start);
    values.push_back(sweep_number(value));
  }
  return values;
}

std::vector<std::string> integer_range(long long first, long long last, const std::string& where) {
  constexpr long long kMostValues = 1000000;
  const long long step = first <= last ? 1 : -1;
  if ((last - first) * step >= kMostValues) {
    throw InputError(where, "the range spans more than a million values");
  }
  std::vector<std::string> values;
  for (long long v = first;; v += step) {
    values.push_back(std::to_string(v));
    if (v == last) break;
  }
  return values;
}

}  // namespace

constexpr EnumWord<SweepCombine> kSweepCombineWords[] = {{SweepCombine::grid, "grid"},
                                                         {SweepCombine::zip, "zip"}};

std::string to_string(SweepCombine value) { return word_of(value, kSweepCombineWords); }

SweepCombine sweep_combine_from_string(const std::string& text, const std::string& where) {
  return value_of(text, kSweepCombineWords, where);
}

std::string trim_blanks(const std::string& text) {
  const auto first = text.find_first_not_of(" \t");
  if (first == std::string::npos) return "";
  return text.substr(first, text.find_last_not_of(" \t") - first + 1);
}

double finite_number_in(const std::string& item, const std::string& where,
                        const std::string& spec) {
  char* end = nullptr;
  const std::string t = trim_blanks(item);
  const double value = std::strtod(t.c_str(), &end);
  if (t.empty() || *end != '\0' || !std::isfinite(value)) {
    throw InputError(where, "'" + t + "' in '" + spec + "' is not a finite number");
  }
  return value;
}

std::vector<std::string> expand_sweep_values(const std::string& spec, const std::string& where) {
  static const std::regex spaced(R"(^\s*(linear|log)\s*\(([^,]*),([^,]*),([^,]*)\)\s*$)");
  static const std::regex range(R"(^\s*(-?\d+)\s*\.\.\s*(-?\d+)\s*$)");
  std::smatch m;
  if (std::regex_match(spec, m, spaced)) return spaced_values(m[1], m, where, spec);
  if (std::regex_match(spec, m, range)) {
    return integer_range(std::stoll(m[1]), std::stoll(m[2]), where);
  }
  if (spec.find('(') != std::string::npos || spec.find("..") != std::string::npos) {
    throw InputError(where, "'" + spec +
                                "' is not a sweep; write a list (a, b, c), a range (1..20), "
                                "linear(start, stop, count) or log(start, stop, count)");
  }
  std::vector<std::string> values;
  std::size_t begin = 0;
  for (;;) {
    const std::size_t comma = spec.find(',', begin);
    const std::string item = trim_blanks(spec.substr(begin, comma - begin));
    if (item.empty()) throw InputError(where, "'" + spec + "' has an empty item");
    values.push_back(item);
    if (comma == std::string::npos) break;
    begin = comma + 1;
  }
  return values;
}

std::vector<SweepPoint> sweep_points(const std::vector<SweepAxis>& axes, SweepCombine combine,
                                     long replicates) {
  // Counted before anything is built: a sweep too large fails at once.
  constexpr double kMostRuns = 1e6;
  double runs = static_cast<double>(replicates);
  std::string product;
  for (const auto& axis : axes) {
    if (combine == SweepCombine::grid || &axis == &axes.front())
      runs *= static_cast<double>(axis.values.size());
    product += std::to_string(axis.values.size()) + " " + axis.key + " x ";
  }
  if (runs > kMostRuns) {
    throw InputError("[sweep]", "the sweep has " + product + std::to_string(replicates) +
                                    " replicates, more than a million runs; split it into several "
                                    "experiments");
  }
  std::vector<std::vector<std::pair<std::string, std::string>>> settings(1);
  if (combine == SweepCombine::zip && !axes.empty()) {
    const std::size_t length = axes.front().values.size();
    for (const auto& axis : axes) {
      if (axis.values.size() != length) {
        throw InputError(axis.where, "combine = zip needs axes of equal length, but " + axis.key +
                                         " has " + std::to_string(axis.values.size()) +
                                         " values and " + axes.front().key + " has " +
                                         std::to_string(length));
      }
    }
    settings.assign(length, {});
    for (std::size_t k = 0; k < length; ++k)
      for (const auto& axis : axes) settings[k].emplace_back(axis.key, axis.values[k]);
  } else {
    for (const auto& axis : axes) {
      std::vector<std::vector<std::pair<std::string, std::string>>> next;
      for (const auto& partial : settings) {
        for (const auto& value : axis.values) {
          next.push_back(partial);
          next.back().emplace_back(axis.key, value);
        }
      }
      settings = std::move(next);
    }
  }
  std::vector<SweepPoint> points;
  for (const auto& s : settings)
    for (long r = 0; r < replicates; ++r) points.push_back({s, r});
  return points;
}

std::string sweep_syntax_help() {
  return "sweep axes (in the [sweep] section, one line per key to vary):\n"
         "  dynamics.temperature = 0.05, 0.1, 0.2     a list (numbers or words)\n"
         "  scenario.agents = 20..40                  whole numbers, both ends included\n"
         "  dynamics.price_step = linear(0.2, 1, 5)   5 evenly spaced values\n"
         "  dynamics.temperature = log(0.01, 1, 7)    7 log-spaced values\n"
         "  combine = grid | zip                      every combination, or k-th with k-th\n"
         "  replicates = 3                            runs per point, each with its own seed\n";
}

}  // namespace allocsim
