#include "allocsim/experiments/trend.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <numeric>
#include <sstream>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Permuted |rho| within this of the observed one counts as "as extreme"
// (rank correlations of ties can differ only by rounding).
constexpr double kRhoTieTolerance = 1e-12;

double mean(const std::vector<double>& values) {
  return std::accumulate(values.begin(), values.end(), 0.0) / static_cast<double>(values.size());
}

// Centred copy and its sum of squares.
std::vector<double> centred(const std::vector<double>& values, double& sum_of_squares) {
  const double m = mean(values);
  std::vector<double> out(values.size());
  sum_of_squares = 0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    out[i] = values[i] - m;
    sum_of_squares += out[i] * out[i];
  }
  return out;
}

double dot(const std::vector<double>& a, const std::vector<double>& b) {
  double sum = 0;
  for (std::size_t i = 0; i < a.size(); ++i) sum += a[i] * b[i];
  return sum;
}

void shuffle(std::vector<double>& values, RandomStream& rng) {
  for (std::size_t i = values.size(); i > 1; --i) {
    std::swap(values[i - 1], values[rng.below(i)]);
  }
}

double permutation_p_value(const std::vector<double>& x, const std::vector<double>& y, double rho,
                           const TrendOptions& options, RandomStream& rng) {
  double xx = 0, yy = 0;
  const std::vector<double> rx = centred(average_ranks(x), xx);
  std::vector<double> ry = centred(average_ranks(y), yy);
  const double scale = std::sqrt(xx * yy);
  long as_extreme = 0;
  for (long b = 0; b < options.permutations; ++b) {
    shuffle(ry, rng);
    if (std::abs(dot(rx, ry) / scale) >= std::abs(rho) - kRhoTieTolerance) ++as_extreme;
  }
  return (1.0 + static_cast<double>(as_extreme)) /
         (1.0 + static_cast<double>(options.permutations));
}

// Value at quantile q of sorted values (linear interpolation, numpy's default).
double quantile(const std::vector<double>& sorted, double q) {
  const double position = q * static_cast<double>(sorted.size() - 1);
  const auto below = static_cast<std::size_t>(std::floor(position));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  return sorted[below] + (position - static_cast<double>(below)) * (sorted[above] - sorted[below]);
}

struct Group {
  double centred_log_x = 0;
  std::vector<double> residuals;  // modified: inflated by sqrt(g / (g - 1))
};

std::vector<Group> replicate_groups(const std::vector<double>& x, const std::vector<double>& y) {
  std::map<double, std::vector<double>> by_x;
  for (std::size_t i = 0; i < x.size(); ++i) by_x[x[i]].push_back(y[i]);
  double sum_log_x = 0;
  for (double value : x) sum_log_x += std::log10(value);
  const double mean_log_x = sum_log_x / static_cast<double>(x.size());
  std::vector<Group> groups;
  for (const auto& [value, ys] : by_x) {
    Group group;
    group.centred_log_x = std::log10(value) - mean_log_x;
    const double g = static_cast<double>(ys.size());
    const double inflate = ys.size() > 1 ? std::sqrt(g / (g - 1)) : 0.0;
    const double group_mean = mean(ys);
    for (double v : ys) group.residuals.push_back(inflate * (v - group_mean));
    groups.push_back(std::move(group));
  }
  return groups;
}

void bootstrap_interval(const std::vector<double>& x, const std::vector<double>& y,
                        const TrendOptions& options, RandomStream& rng, TrendResult& result) {
  const std::vector<Group> groups = replicate_groups(x, y);
  double sxx = 0;
  for (const auto& group : groups) {
    sxx += static_cast<double>(group.residuals.size()) * group.centred_log_x * group.centred_log_x;
  }
  std::vector<double> slopes(static_cast<std::size_t>(options.bootstrap_draws));
  for (auto& slope : slopes) {
    double shift = 0;
    for (const auto& group : groups) {
      const std::size_t g = group.residuals.size();
      double drawn = 0;
      for (std::size_t k = 0; k < g; ++k) drawn += group.residuals[rng.below(g)];
      shift += group.centred_log_x * drawn;
    }
    slope = result.slope + shift / sxx;
  }
  std::sort(slopes.begin(), slopes.end());
  const double tail = (1 - options.confidence) / 2;
  result.slope_low = quantile(slopes, tail);
  result.slope_high = quantile(slopes, 1 - tail);
}

std::string number_text(double value, int digits = 2) {
  if (!std::isfinite(value)) return "n/a";
  std::ostringstream out;
  out.precision(digits);
  const double magnitude = std::abs(value);
  if (magnitude != 0 && (magnitude >= 1e4 || magnitude < 1e-3)) {
    out << std::scientific << value;
  } else {
    // Enough decimals for `digits` significant ones, at least for values below 10.
    int decimals = digits - 1;
    if (magnitude >= 1)
      decimals = std::max(0, digits - 1 - static_cast<int>(std::floor(std::log10(magnitude))));
    else if (magnitude > 0)
      decimals = digits - 1 - static_cast<int>(std::floor(std::log10(magnitude)));
    out << std::fixed;
    out.precision(decimals);
    out << value;
    std::string text = out.str();
    if (text.find('.') != std::string::npos) {
      text.erase(text.find_last_not_of('0') + 1);
      if (text.back() == '.') text.pop_back();
    }
    return text;
  }
  return out.str();
}

std::string p_text(double p) {
  if (!std::isfinite(p)) return "p n/a";
  if (p < 0.001) return "p < 0.001";
  return "p = " + number_text(p, 2);
}

}  // namespace

void TrendOptions::validate() const {
  if (permutations < 99) throw InputError("permutations", "must be at least 99");
  if (bootstrap_draws < 200) throw InputError("bootstrap_draws", "must be at least 200");
  if (!(confidence > 0 && confidence < 1)) throw InputError("confidence", "must lie in (0, 1)");
  if (!(significance > 0 && significance < 1)) {
    throw InputError("significance", "must lie in (0, 1)");
  }
  if (!(z_threshold > 0)) throw InputError("z_threshold", "must be positive");
}

constexpr EnumWord<TrendDirection> kTrendDirectionWords[] = {
    {TrendDirection::rises, "rises"},
    {TrendDirection::falls, "falls"},
    {TrendDirection::no_clear_trend, "no clear trend"},
    {TrendDirection::not_measurable, "not measurable"}};

std::string to_string(TrendDirection value) { return word_of(value, kTrendDirectionWords); }

std::vector<double> average_ranks(const std::vector<double>& values) {
  std::vector<std::size_t> order(values.size());
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(),
                   [&values](std::size_t a, std::size_t b) { return values[a] < values[b]; });
  std::vector<double> ranks(values.size());
  for (std::size_t start = 0; start < order.size();) {
    std::size_t end = start + 1;
    while (end < order.size() && values[order[end]] == values[order[start]]) ++end;
    const double rank = 0.5 * static_cast<double>(start + end + 1);  // mean of start+1 .. end
    for (std::size_t k = start; k < end; ++k) ranks[order[k]] = rank;
    start = end;
  }
  return ranks;
}

double spearman_rho(const std::vector<double>& x, const std::vector<double>& y) {
  if (x.size() != y.size() || x.size() < 2) return kNaN;
  double xx = 0, yy = 0;
  const std::vector<double> rx = centred(average_ranks(x), xx);
  const std::vector<double> ry = centred(average_ranks(y), yy);
  if (xx == 0 || yy == 0) return kNaN;
  return dot(rx, ry) / std::sqrt(xx * yy);
}

double log10_slope(const std::vector<double>& x, const std::vector<double>& y) {
  std::vector<double> log_x(x.size());
  for (std::size_t i = 0; i < x.size(); ++i) log_x[i] = std::log10(x[i]);
  double sxx = 0;
  const std::vector<double> centred_log_x = centred(log_x, sxx);
  if (!(sxx > 0)) return kNaN;
  return dot(centred_log_x, y) / sxx;
}

std::string TrendResult::brief() const {
  std::ostringstream out;
  out << "rho " << number_text(rho) << " (" << p_text(p_value) << ", " << runs << " runs), slope "
      << number_text(slope) << " per tenfold x [" << number_text(slope_low) << ", "
      << number_text(slope_high) << "]";
  if (with_z > 0)
    out << ", z > threshold in " << above << " and < -threshold in " << below << " of " << with_z;
  if (!note.empty()) out << "; " << note;
  return out.str();
}

TrendResult measure_trend(const std::vector<double>& x_all, const std::vector<double>& y_all,
                          const std::vector<double>& z_all, const TrendOptions& options,
                          std::uint64_t stream) {
  options.validate();
  if (y_all.size() != x_all.size() || (!z_all.empty() && z_all.size() != x_all.size())) {
    throw std::invalid_argument("measure_trend: x, y and z differ in length");
  }
  TrendResult result;
  std::vector<double> x, y;
  for (std::size_t i = 0; i < x_all.size(); ++i) {
    if (std::isfinite(x_all[i]) && !(x_all[i] > 0)) {
      throw InputError("x", "holds " + number_text(x_all[i], 3) +
                                "; the slope is against log10 x, so x must be positive");
    }
    if (std::isfinite(x_all[i]) && std::isfinite(y_all[i])) {
      x.push_back(x_all[i]);
      y.push_back(y_all[i]);
      if (!z_all.empty() && std::isfinite(z_all[i])) {
        ++result.with_z;
        if (z_all[i] > options.z_threshold) ++result.above;
        if (z_all[i] < -options.z_threshold) ++result.below;
      }
    } else {
      ++result.left_out;
    }
  }
  result.runs = static_cast<long>(x.size());
  std::map<double, long> group_sizes;
  for (double value : x) ++group_sizes[value];
  result.x_values = static_cast<long>(group_sizes.size());
  result.smallest_group = 0;
  for (const auto& [value, size] : group_sizes) {
    result.smallest_group =
        result.smallest_group == 0 ? size : std::min(result.smallest_group, size);
  }
  result.rho = spearman_rho(x, y);
  result.slope = result.x_values >= 2 ? log10_slope(x, y) : kNaN;
  result.p_value = kNaN;
  result.slope_low = result.slope_high = kNaN;
  if (!std::isfinite(result.rho)) {
    result.direction = TrendDirection::not_measurable;
    result.note = result.x_values < 2 ? "x takes fewer than two values"
                  : result.runs < 2   ? "fewer than two runs"
                                      : "the metric does not vary";
    return result;
  }
  RandomStream rng(options.seed, stream, StreamId::trend);
  result.p_value = permutation_p_value(x, y, result.rho, options, rng);
  if (result.smallest_group >= 2) {
    bootstrap_interval(x, y, options, rng, result);
  } else {
    result.note = "no slope interval: some x value has a single run (needs replicates)";
  }
  if (result.p_value < options.significance) {
    result.direction = result.rho > 0 ? TrendDirection::rises : TrendDirection::falls;
  } else {
    result.direction = TrendDirection::no_clear_trend;
  }
  return result;
}

std::string describe_trend(const TrendResult& r, const TrendWording& w,
                           const TrendOptions& options) {
  std::ostringstream out;
  if (!w.level.empty()) out << "With " << w.level << ", ";
  out << w.metric << " ";
  switch (r.direction) {
    case TrendDirection::rises:
      out << "rises with ";
      break;
    case TrendDirection::falls:
      out << "falls with ";
      break;
    case TrendDirection::no_clear_trend:
      out << "shows no clear trend with ";
      break;
    case TrendDirection::not_measurable:
      out << "has no measurable trend with ";
      break;
  }
  out << w.x_name;
  if (r.direction == TrendDirection::not_measurable) {
    out << " (" << r.note << "; " << r.runs << " runs)";
  } else {
    out << ": rho " << number_text(r.rho) << " over " << r.runs << " runs, " << p_text(r.p_value)
        << "; slope " << number_text(r.slope) << " per tenfold " << w.x_name;
    if (std::isfinite(r.slope_low)) {
      out << " (" << number_text(100 * options.confidence, 3) << "% interval "
          << number_text(r.slope_low) << " to " << number_text(r.slope_high) << ")";
      const bool excludes_zero = r.slope_low > 0 || r.slope_high < 0;
      if (r.direction == TrendDirection::no_clear_trend && excludes_zero) {
        out << ", which excludes 0: a slope the rank test does not confirm";
      } else if (r.direction != TrendDirection::no_clear_trend && !excludes_zero) {
        out << ", which includes 0";
      }
    } else {
      out << " (no interval: needs two or more runs at every value)";
    }
  }
  if (r.with_z > 0 && !w.more_than.empty()) {
    out << "; " << r.above << " of " << r.with_z << " runs " << w.more_than << ", " << r.below
        << " " << w.less_than;
  }
  if (r.left_out > 0) out << " (" << r.left_out << " runs without a value left out)";
  out << ".";
  return out.str();
}

std::vector<TrendLevel> trends_by_level(const std::vector<double>& x, const std::vector<double>& y,
                                        const std::vector<double>& z,
                                        const std::vector<std::string>& levels,
                                        const TrendOptions& options) {
  if (levels.empty()) return {{"", measure_trend(x, y, z, options, 0)}};
  if (levels.size() != x.size())
    throw std::invalid_argument("trends_by_level: levels differ in length");
  std::vector<std::string> order;
  for (const auto& level : levels) {
    if (std::find(order.begin(), order.end(), level) == order.end()) order.push_back(level);
  }
  std::vector<TrendLevel> trends;
  for (std::size_t k = 0; k < order.size(); ++k) {
    std::vector<double> xs, ys, zs;
    for (std::size_t i = 0; i < levels.size(); ++i) {
      if (levels[i] != order[k]) continue;
      xs.push_back(x[i]);
      ys.push_back(y[i]);
      if (!z.empty()) zs.push_back(z[i]);
    }
    trends.push_back({order[k], measure_trend(xs, ys, zs, options, k)});
  }
  return trends;
}

}  // namespace allocsim
