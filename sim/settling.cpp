#include "allocsim/sim/settling.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// E|X| / sd of a normal X with mean 0: sqrt(2 / pi).
// Below this many windows the advice names a smaller window too.
constexpr long kFewWindows = 4;
const double kMeanAbsoluteNormal = std::sqrt(2.0 / M_PI);

std::string percent(double share) {
  if (!std::isfinite(share)) return "n/a";
  std::ostringstream out;
  out.precision(2);
  out << 100 * share << "%";
  return out.str();
}

}  // namespace

double capacity_error(const Matrix& window, const Vector& capacities) {
  const double total = window.sum();
  if (!(total > 0)) return kNaN;
  const Vector column_shares = window.colwise().sum().transpose() / total;
  return 0.5 * (column_shares - capacities / capacities.sum()).cwiseAbs().sum();
}

double window_change(const Matrix& previous, const Matrix& window) {
  const double a = previous.sum(), b = window.sum();
  if (!(a > 0 && b > 0)) return kNaN;
  return 0.5 * (window / b - previous / a).cwiseAbs().sum();
}

double capacity_allowance(const Vector& capacities, double units) {
  if (!(units > 0)) return kNaN;
  const Vector s = capacities / capacities.sum();
  return 0.5 * kMeanAbsoluteNormal * (s.array() * (1 - s.array()) / units).sqrt().sum();
}

double change_allowance(const Matrix& previous, const Matrix& window) {
  const double a = previous.sum(), b = window.sum();
  if (!(a > 0 && b > 0)) return kNaN;
  const Matrix pooled = (previous + window) / (a + b);
  return 0.5 * kMeanAbsoluteNormal *
         (pooled.array() * (1 - pooled.array()) * (1 / a + 1 / b)).sqrt().sum();
}

void add_window(SettlingTrace& trace, const Matrix* previous, const Matrix& window,
                long first_round, const Vector& capacities, bool sampled) {
  trace.capacity_errors.push_back(capacity_error(window, capacities));
  trace.capacity_allowances.push_back(sampled ? capacity_allowance(capacities, window.sum()) : 0.0);
  trace.first_rounds.push_back(first_round);
  if (previous) {
    trace.changes.push_back(window_change(*previous, window));
    trace.change_allowances.push_back(sampled ? change_allowance(*previous, window) : 0.0);
  } else {
    trace.changes.push_back(kNaN);
    trace.change_allowances.push_back(kNaN);
  }
}

std::string Settling::brief() const {
  std::ostringstream out;
  out << (settled ? "settled" : "not settled") << ": capacity error " << percent(capacity_error)
      << " (limit " << percent(capacity_limit) << ")";
  if (worst_capacity_excess > 0) {
    out << ", an earlier counted window " << percent(worst_capacity_excess) << " over its limit";
  }
  out << ", change between the last two windows " << percent(change) << " (limit "
      << percent(change_limit) << "), drift since burn-in " << percent(drift) << " (limit "
      << percent(drift_limit) << ")";
  return out.str();
}

Settling assess_settling(const SettlingTrace& trace, long burn_in, const SettlingOptions& options) {
  Settling s;
  const std::size_t k = trace.capacity_errors.size();
  s.capacity_error = k >= 1 ? trace.capacity_errors[k - 1] : kNaN;
  s.capacity_limit = k >= 1 ? options.capacity_tolerance + trace.capacity_allowances[k - 1] : kNaN;
  s.change = k >= 2 ? trace.changes[k - 1] : kNaN;
  s.change_limit = k >= 2 ? options.change_tolerance + trace.change_allowances[k - 1] : kNaN;
  s.drift = trace.drift;
  s.drift_limit = options.change_tolerance + trace.drift_allowance;
  s.worst_capacity_excess = -std::numeric_limits<double>::infinity();
  for (std::size_t w = 0; w < k; ++w) {
    if (trace.first_rounds[w] <= burn_in) continue;
    ++s.counted_windows;
    const double excess =
        trace.capacity_errors[w] - (options.capacity_tolerance + trace.capacity_allowances[w]);
    s.worst_capacity_excess = std::max(s.worst_capacity_excess, std::isnan(excess) ? 1.0 : excess);
  }
  if (s.counted_windows < 2) {
    s.settled = false;
    s.worst_capacity_excess = kNaN;
    s.advice =
        "fewer than two snapshot windows after burn-in cannot show settling: use a smaller "
        "window or more rounds";
    s.settings_to_change = {"window", "rounds"};
    return s;
  }
  const bool capacities_met = s.worst_capacity_excess <= 0;
  const bool steady = s.change <= s.change_limit;
  const bool no_drift = s.drift <= s.drift_limit;
  s.settled = capacities_met && steady && no_drift;
  if (!s.settled) {
    s.advice = "play more rounds with a longer burn-in";
    s.settings_to_change = {"rounds", "burn_in"};
    if (!capacities_met) {
      s.advice += "; at low temperature a larger price step helps";
      s.settings_to_change.push_back("price_step");
    }
    // With few windows the counted ones still hold the start of the run.
    if (s.counted_windows < kFewWindows) {
      s.advice += "; or use a smaller window";
      s.settings_to_change.push_back("window");
    }
  }
  return s;
}

}  // namespace allocsim
