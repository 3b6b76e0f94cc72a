#include "allocsim/experiments/replay.hpp"

#include <cmath>
#include <cstdlib>

#include "allocsim/core/error.hpp"
#include "allocsim/experiments/sweep_runner.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_reader.hpp"

namespace allocsim {
namespace {

// Axis values match when equal as text, or as numbers within this relative
// difference (a value typed from a printed table).
constexpr double kRelativeMatch = 1e-9;

bool same_value(const std::string& a, const std::string& b) {
  if (a == b) return true;
  char* end_a = nullptr;
  char* end_b = nullptr;
  const double x = std::strtod(a.c_str(), &end_a), y = std::strtod(b.c_str(), &end_b);
  if (a.empty() || b.empty() || *end_a != '\0' || *end_b != '\0') return false;
  return std::abs(x - y) <= kRelativeMatch * std::max(std::abs(x), std::abs(y));
}

std::string axis_values(const SweepAxis& axis) {
  std::string list;
  for (const auto& value : axis.values) list += (list.empty() ? "" : ", ") + value;
  return list;
}

}  // namespace

RunToPlay run_from_results(const std::string& path, const std::string& run) {
  const ResultsReader reader(path);
  reader.require_run(run);
  const Attributes attributes = reader.run_attributes(run);
  RunToPlay play;
  const std::string where = path + ": " + run;
  for (const auto& key : experiment_keys()) {
    const std::string text = attribute_text(attributes, key.name);
    if (text.empty() && key.kind != KeyKind::path) {
      throw InputError(where, "has no attribute " + key.name +
                                  "; it was written by an allocsim "
                                  "that did not record every key");
    }
    play.values.set(key.name, text, where);
  }
  const auto index = attribute_number(attributes, layout::kRunIndex);
  if (!index || *index < 0)
    throw InputError(where, "has no run_index attribute to seed the replay");
  play.run_index = static_cast<long>(*index);
  return play;
}

bool has_sweep(const std::string& path) {
  ExperimentValues values;
  SweepSection sweep;
  read_experiment_file(path, values, &sweep);
  return !sweep.empty();
}

RunToPlay point_of_sweep(const std::string& path,
                         const std::vector<std::pair<std::string, std::string>>& command_line,
                         long point, long replicate) {
  ExperimentValues file_values;
  SweepSection sweep;
  read_experiment_file(path, file_values, &sweep);
  std::vector<std::pair<std::string, std::string>> fixed, swept;
  for (const auto& given : command_line) {
    bool is_swept = false;
    for (const auto& axis : sweep.axes) is_swept = is_swept || axis.key == given.first;
    (is_swept ? swept : fixed).push_back(given);
  }
  const SweepPlan plan = plan_sweep(path, fixed);
  const long count = static_cast<long>(plan.points.size());
  if (point >= 0) {
    if (!swept.empty()) {
      throw InputError("--point", "picks the point itself; leave out --" + swept.front().first);
    }
    if (point >= count) {
      throw InputError("--point", std::to_string(point) + " is past the sweep's last point (" +
                                      path + " has " + std::to_string(count) + " runs, 0 to " +
                                      std::to_string(count - 1) + ")");
    }
  } else {
    std::vector<long> matches;
    for (long k = 0; k < count; ++k) {
      const SweepPoint& p = plan.points[static_cast<std::size_t>(k)];
      bool match = p.replicate == replicate;
      for (const auto& [key, text] : swept) {
        for (const auto& [axis_key, value] : p.settings) {
          if (axis_key == key && !same_value(value, text)) match = false;
        }
      }
      if (match) matches.push_back(k);
    }
    if (matches.size() != 1) {
      for (const auto& axis : sweep.axes) {
        bool given = false;
        for (const auto& [key, text] : swept) given = given || key == axis.key;
        if (!given || matches.empty()) {
          throw InputError(path, std::string(matches.empty() ? "no point" : "several points") +
                                     " of the sweep match; give --" + axis.key + " (one of " +
                                     axis_values(axis) + ") or --point K (0 to " +
                                     std::to_string(count - 1) +
                                     "), or play every point with 'allocsim run " + path + "'");
        }
      }
      throw InputError(path, "no point of the sweep matches; --replicate is 0 to " +
                                 std::to_string(sweep.replicates - 1));
    }
    point = matches.front();
  }
  return {plan.run_values(point), point};
}

}  // namespace allocsim
