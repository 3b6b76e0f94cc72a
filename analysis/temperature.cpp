#include "allocsim/analysis/temperature.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <sstream>
#include <vector>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/analysis/marginal_newton.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kMaxStepInLogBeta = 3.0;  // a Newton step changes beta by at most e^3
constexpr long kMaxRootSteps = 200;

// One solve of the profile: the entropic coupling with the observed
// marginals at beta = exp(u).
struct ProfilePoint {
  double u = 0, beta = 0;
  double gain = 0;      // <gains, pi>
  double loglik = 0;    // sum p log pi (per unit)
  double variance = 0;  // V(beta)
  Matrix coupling;
  bool ok = false;
  std::string message;
};

Matrix allowed_cells(const TransportProblem& problem) {
  Matrix allowed = Matrix::Ones(problem.agents(), problem.partners());
  if (problem.access)
    for (Eigen::Index k = 0; k < allowed.size(); ++k)
      allowed.data()[k] = problem.access->data()[k] != 0 ? 1.0 : 0.0;
  return allowed;
}

// Each point: potentials f, g (gain units) from the nearest point solved so
// far, or from a loose Sinkhorn solve for the first one, then Newton on the
// marginals to the full tolerance (marginal_newton.hpp); a full Sinkhorn
// solve if Newton fails.
class Profile {
 public:
  Profile(const ObservedAllocation& observed, const TemperatureOptions& options)
      : observed_(observed), options_(options), allowed_(allowed_cells(observed.problem)) {}

  ProfilePoint at(double u) {
    ProfilePoint point;
    point.u = u;
    point.beta = std::exp(u);
    ++solves_;
    DualPotentials start;
    const Warm* warm = nearest(u);
    if (warm) {
      start = warm->potentials;
    } else if (!sinkhorn(point.beta, nullptr, 0, 1e-9, 20000, start, point.message)) {
      return point;
    }
    const TransportProblem& problem = observed_.problem;
    MarginalFit fit =
        match_marginals(point.beta * problem.gains, allowed_, problem.budgets, problem.capacities,
                        point.beta * start.agent, point.beta * start.partner,
                        options_.sinkhorn_tolerance, kMaxNewtonSteps);
    if (!fit.converged) {
      DualPotentials solved;
      if (!sinkhorn(point.beta, &start, warm ? std::exp(-warm->u) : 0.0,
                    options_.sinkhorn_tolerance, options_.max_sinkhorn_iterations, solved,
                    point.message))
        return point;
      fit =
          match_marginals(point.beta * problem.gains, allowed_, problem.budgets, problem.capacities,
                          point.beta * solved.agent, point.beta * solved.partner,
                          options_.sinkhorn_tolerance, kMaxNewtonSteps);
      if (!fit.converged) {
        point.message =
            "the marginals could not be matched at epsilon " + std::to_string(1.0 / point.beta);
        return point;
      }
    }
    point.gain = problem.gains.cwiseProduct(fit.coupling).sum();
    point.loglik = point.beta * problem.gains.cwiseProduct(observed_.shares).sum() +
                   fit.row_effect.dot(problem.budgets) + fit.column_effect.dot(problem.capacities);
    point.variance = conditional_variance(problem.gains, fit.coupling);
    point.coupling = std::move(fit.coupling);
    point.ok = true;
    warm_.push_back({u, {fit.row_effect / point.beta, fit.column_effect / point.beta}});
    return point;
  }

  long solves() const { return solves_; }
  bool budget_left() const { return solves_ < options_.max_solves; }

 private:
  static constexpr long kMaxNewtonSteps = 100;
  struct Warm {
    double u;
    DualPotentials potentials;  // gain units: log pi = beta (gains + f + g)
  };
  const Warm* nearest(double u) const {
    const Warm* best = nullptr;
    for (const Warm& w : warm_)
      if (!best || std::abs(w.u - u) < std::abs(best->u - u)) best = &w;
    return best;
  }

  bool sinkhorn(double beta, const DualPotentials* warm, double warm_epsilon, double tolerance,
                long iterations, DualPotentials& out, std::string& message) const {
    EntropicOptions entropic;
    entropic.epsilon = 1.0 / beta;
    entropic.tolerance = tolerance;
    entropic.max_iterations = iterations;
    EntropicResult solved = solve_entropic(observed_.problem, entropic, warm, warm_epsilon);
    if (solved.status == EntropicStatus::infeasible || !solved.coupling.allFinite() ||
        solved.potentials.agent.size() == 0) {
      message = "the Sinkhorn solve at epsilon " + std::to_string(entropic.epsilon) +
                " failed: " + solved.message;
      return false;
    }
    out = std::move(solved.potentials);
    return true;
  }

  const ObservedAllocation& observed_;
  const TemperatureOptions& options_;
  Matrix allowed_;
  std::vector<Warm> warm_;
  long solves_ = 0;
};

// f(u) returns the value and slope of an increasing (or decreasing) function
// of u; finds its root inside (lo, hi), one end of which may be infinite.
struct RootValue {
  double value = 0, slope = 0;
  bool ok = false;
};
struct RootOutcome {
  double u = 0;
  long steps = 0;
  bool ok = false;
};

template <class Function>
RootOutcome find_root(Function f, double u, double lo, double hi, bool increasing, double tolerance,
                      Profile& profile) {
  RootOutcome out;
  for (out.steps = 0; out.steps < kMaxRootSteps && profile.budget_left(); ++out.steps) {
    const RootValue v = f(u);
    if (!v.ok) return out;
    if (v.value == 0) return {u, out.steps + 1, true};
    const bool root_above = increasing ? v.value < 0 : v.value > 0;
    (root_above ? lo : hi) = u;
    double next = u - v.value / v.slope;
    next = std::clamp(next, u - kMaxStepInLogBeta, u + kMaxStepInLogBeta);
    if (!std::isfinite(next) || next <= lo || next >= hi || (root_above != (next > u))) {
      if (std::isfinite(lo) && std::isfinite(hi))
        next = 0.5 * (lo + hi);
      else
        next = root_above ? u + kMaxStepInLogBeta : u - kMaxStepInLogBeta;
    }
    if (std::abs(next - u) < tolerance || (hi - lo) < tolerance) return {next, out.steps + 1, true};
    u = next;
  }
  return out;
}

// Coupling of largest entropy under the access mask: beta = 0.
MarginalFit independent_coupling(const TransportProblem& problem, double tolerance) {
  const Matrix allowed = allowed_cells(problem);
  return match_marginals(Matrix::Zero(problem.agents(), problem.partners()), allowed,
                         problem.budgets, problem.capacities, problem.budgets.array().log(),
                         problem.capacities.array().log(), tolerance, 200);
}

// Width z of the two-sided normal interval of this confidence.
double normal_quantile_two_sided(double confidence) {
  double lo = 0, hi = 40;
  for (int k = 0; k < 200; ++k) {
    const double mid = 0.5 * (lo + hi);
    (std::erf(mid / std::sqrt(2.0)) < confidence ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

struct Interval {
  double beta_low = kNaN, beta_high = kNaN;  // beta_low may be 0 (epsilon infinite)
  bool ok = false;
  std::string message;
};

// How far above the estimate (in log beta) the interval's upper end is
// looked for before epsilon 0 counts as inside the set.
constexpr double kFarLogBeta = 40;

// Likelihood-ratio interval in beta around the estimate `best`.
Interval likelihood_interval(const ObservedAllocation& o, const TemperatureOptions& options,
                             const ProfilePoint& best, double independent_loglik,
                             Profile& profile) {
  Interval interval;
  const double target = chi_square_1_quantile(options.confidence) / (2.0 * o.units);
  const double observed = o.observed_gain();
  const double z = normal_quantile_two_sided(options.confidence);
  const double se_beta = 1.0 / std::sqrt(o.units * best.variance);
  // D(u) = l(beta_hat) - l(beta) - target, per unit; dD/du = -beta (observed - G(beta)).
  auto drop = [&](double u) {
    const ProfilePoint p = profile.at(u);
    RootValue v;
    v.ok = p.ok;
    v.value = best.loglik - p.loglik - target;
    v.slope = -p.beta * (observed - p.gain);
    return v;
  };
  const double upper_start = std::log(best.beta + z * se_beta);
  const RootOutcome high =
      find_root(drop, upper_start, best.u, kInf, true, options.beta_tolerance * 10, profile);
  if (high.ok) {
    interval.beta_high = std::exp(high.u);
  } else if (const RootValue far = drop(best.u + kFarLogBeta); far.ok && far.value < 0) {
    // The likelihood never falls by the target towards beta = infinity (the
    // counts sit on the exact optimum's support): epsilon 0 is inside the set.
    interval.beta_high = kInf;
  } else {
    interval.message = "the upper end of the interval in beta was not found";
    return interval;
  }
  if (best.loglik - independent_loglik - target <= 0) {
    interval.beta_low = 0;  // the independent coupling is inside: epsilon unbounded above
  } else {
    const double guess = best.beta - z * se_beta;
    const double lower_start = std::log(guess > 0 ? guess : best.beta / 4);
    const RootOutcome low =
        find_root(drop, lower_start, -kInf, best.u, false, options.beta_tolerance * 10, profile);
    if (!low.ok) {
      interval.message = "the lower end of the interval in beta was not found";
      return interval;
    }
    interval.beta_low = std::exp(low.u);
  }
  interval.ok = true;
  return interval;
}

void set_boundary(TemperatureResult& result, TemperatureStatus status, const std::string& why) {
  result.status = status;
  result.message = why;
  const bool optimum = status == TemperatureStatus::at_optimum;
  result.epsilon = optimum ? 0.0 : kInf;
  result.beta = optimum ? kInf : 0.0;
}

// Per-unit log-likelihood sum p log pi computed from the coupling (no
// cancellation at large beta); -inf when pi is 0 where p is not.
double direct_loglik(const Matrix& shares, const Matrix& coupling) {
  double l = 0;
  for (Eigen::Index k = 0; k < shares.size(); ++k)
    if (shares.data()[k] > 0) {
      if (!(coupling.data()[k] > 0)) return -kInf;
      l += shares.data()[k] * std::log(coupling.data()[k]);
    }
  return l;
}

// At the optimum the profile likelihood rises with beta towards its supremum
// l(infinity); the bound is the beta where it is chi2_1(confidence)/(2N)
// below that: epsilon in [0, 1/beta_low].
void bound_at_optimum(const ObservedAllocation& o, const TemperatureOptions& options,
                      const MarginalFit& flat, double span, TemperatureResult& result) {
  const double target = chi_square_1_quantile(options.confidence) / (2.0 * o.units);
  Profile profile(o, options);
  const double observed = o.observed_gain();
  // Ladder of beta (factor e per rung) up to the supremum of the profile.
  std::vector<ProfilePoint> ladder;
  double supremum = -kInf;
  for (double u = std::log(1.0 / span) - 3; ladder.size() < 80 && profile.budget_left(); u += 1) {
    ProfilePoint p = profile.at(u);
    if (!p.ok) break;
    p.loglik = direct_loglik(o.shares, p.coupling);
    const double rise = p.loglik - supremum;
    supremum = std::max(supremum, p.loglik);
    ladder.push_back(std::move(p));
    if (ladder.size() > 3 && rise < 1e-6 * target) break;
  }
  result.solves += profile.solves();
  if (ladder.empty() || !std::isfinite(supremum)) {
    result.message += "; the one-sided bound could not be computed";
    return;
  }
  result.ci_low = 0;
  const double flat_loglik = direct_loglik(o.shares, flat.coupling);
  if (flat_loglik >= supremum - target) {
    result.ci_high = kInf;  // even partners chosen regardless of gain are within reach
    return;
  }
  std::size_t above = 0;
  while (above < ladder.size() && ladder[above].loglik < supremum - target) ++above;
  const double lo = above > 0 ? ladder[above - 1].u : -kInf;
  const double hi = above < ladder.size() ? ladder[above].u : kInf;
  auto drop = [&](double u) {
    ProfilePoint p = profile.at(u);
    RootValue v;
    v.ok = p.ok;
    if (!p.ok) return v;
    v.value = supremum - direct_loglik(o.shares, p.coupling) - target;
    v.slope = -p.beta * (observed - p.gain);
    return v;
  };
  const long before = profile.solves();
  const double start = std::isfinite(hi) ? hi : lo;
  const RootOutcome root =
      find_root(drop, start, lo, hi, false, options.beta_tolerance * 10, profile);
  result.solves += profile.solves() - before;
  if (!root.ok) {
    result.ci_low = kNaN;
    result.message += "; the one-sided bound could not be computed";
    return;
  }
  result.ci_high = std::exp(-root.u);
}

// Without signal (observed gain at or below the independent coupling's) the
// profile likelihood falls from beta = 0; the bound is the beta where it has
// fallen by chi2_1(confidence)/(2N): epsilon in [1/beta_up, infinity).
void bound_without_signal(const ObservedAllocation& o, const TemperatureOptions& options,
                          const MarginalFit& flat, TemperatureResult& result) {
  const double target = chi_square_1_quantile(options.confidence) / (2.0 * o.units);
  const double flat_loglik = direct_loglik(o.shares, flat.coupling);
  const double observed = o.observed_gain();
  Profile profile(o, options);
  auto drop = [&](double u) {
    ProfilePoint p = profile.at(u);
    RootValue v;
    v.ok = p.ok;
    if (!p.ok) return v;
    v.value = flat_loglik - direct_loglik(o.shares, p.coupling) - target;
    v.slope = p.beta * (p.gain - observed);
    return v;
  };
  const double v0 = conditional_variance(o.problem.gains, flat.coupling);
  const RootOutcome root = find_root(drop, std::log(std::sqrt(2 * target / v0)), -kInf, kInf, true,
                                     options.beta_tolerance * 10, profile);
  result.solves += profile.solves();
  if (!root.ok) {
    result.message += "; the one-sided bound could not be computed";
    return;
  }
  result.ci_low = std::exp(-root.u);
  result.ci_high = kInf;
}

// A power of two near the largest |gain| on the allowed cells, so that
// dividing by it is exact; InputError when the gains are subnormal.
double gains_scale(const ObservedAllocation& o) {
  double largest = 0;
  for (Eigen::Index k = 0; k < o.problem.gains.size(); ++k)
    if (!o.problem.access || o.problem.access->data()[k] != 0)
      largest = std::max(largest, std::abs(o.problem.gains.data()[k]));
  if (largest < std::numeric_limits<double>::min())
    throw InputError(o.sources.gains,
                     "the gains are below 2.2e-308, the smallest normal double, where their "
                     "ratios lose precision; multiply them by a constant (epsilon scales with "
                     "them)");
  return std::ldexp(1.0, std::ilogb(largest));
}

// Multiplies every gain-unit figure by `scale`; false when one that was
// finite and non-zero leaves the range of normal doubles.
bool rescale(TemperatureResult& r, double scale) {
  bool representable = true;
  auto times = [&](double& x, double factor) {
    const bool was_normal = std::isfinite(x) && x != 0;
    x *= factor;
    if (was_normal && !(std::isfinite(x) && std::abs(x) >= std::numeric_limits<double>::min()))
      representable = false;
  };
  for (double* x : {&r.epsilon, &r.standard_error, &r.ci_low, &r.ci_high, &r.observed_gain,
                    &r.fitted_gain, &r.optimum_gain, &r.independent_gain})
    times(*x, scale);
  times(r.beta, 1.0 / scale);
  r.conditional_variance *= scale * scale;  // may overflow at extreme scales; informative only
  return representable;
}

}  // namespace

void TemperatureOptions::validate() const {
  if (!(confidence > 0 && confidence < 1)) throw InputError("confidence", "must be in (0, 1)");
  if (!(beta_tolerance > 0 && beta_tolerance <= 1e-3))
    throw InputError("beta_tolerance", "must be in (0, 1e-3]");
  if (!(sinkhorn_tolerance > 0 && sinkhorn_tolerance <= 1e-6))
    throw InputError("sinkhorn_tolerance", "must be in (0, 1e-6]");
  if (max_sinkhorn_iterations < 1)
    throw InputError("max_sinkhorn_iterations", "must be at least 1");
  if (max_solves < 10) throw InputError("max_solves", "must be at least 10");
  if (!(boundary_tolerance >= 0 && boundary_tolerance <= 0.01))
    throw InputError("boundary_tolerance", "must be in [0, 0.01]");
}

constexpr EnumWord<TemperatureStatus> kTemperatureStatusWords[] = {
    {TemperatureStatus::estimated, "estimated"},
    {TemperatureStatus::at_optimum, "at_optimum"},
    {TemperatureStatus::not_explained_by_noise, "not_explained_by_noise"},
    {TemperatureStatus::not_converged, "not_converged"},
    {TemperatureStatus::no_gains, "no_gains"},
    {TemperatureStatus::not_identified, "not_identified"}};

std::string to_string(TemperatureStatus value) { return word_of(value, kTemperatureStatusWords); }

TemperatureStatus temperature_status_from_string(const std::string& text) {
  return value_of(text, kTemperatureStatusWords, "status");
}

double chi_square_1_quantile(double confidence) {
  const double z = normal_quantile_two_sided(confidence);
  return z * z;
}

namespace {

// max |R| of the additive residual of the gains on the allowed cells; with
// every cell allowed R is the double-centred matrix (a closed form, O(n m)).
double largest_additive_residual(const Matrix& gains, const Matrix* allowed) {
  if (allowed) return additive_residual(gains, *allowed).cwiseAbs().maxCoeff();
  const Vector row_mean = gains.rowwise().mean();
  const RowVector column_mean = gains.colwise().mean();
  const double mean = row_mean.mean();
  double largest = 0;
  for (Eigen::Index i = 0; i < gains.rows(); ++i)
    largest = std::max(
        largest,
        (gains.row(i).array() - column_mean.array() - (row_mean(i) - mean)).abs().maxCoeff());
  return largest;
}

}  // namespace

std::string uninformative_gains_reason(const TransportProblem& problem) {
  Matrix allowed = Matrix::Ones(problem.agents(), problem.partners());
  if (problem.access)
    for (Eigen::Index k = 0; k < allowed.size(); ++k)
      allowed.data()[k] = problem.access->data()[k] != 0 ? 1.0 : 0.0;
  const Matrix on_allowed = problem.gains.cwiseProduct(allowed);
  const double scale = on_allowed.cwiseAbs().maxCoeff();
  const double top = (allowed.array() > 0).select(problem.gains.array(), -kInf).maxCoeff();
  const double bottom = (allowed.array() > 0).select(problem.gains.array(), kInf).minCoeff();
  if (top - bottom <= 1e-10 * std::max(scale, 1e-300))
    return "the gains are the same on every allowed cell, so every allocation has the same "
           "total gain and the gains say nothing about a temperature";
  if (largest_additive_residual(problem.gains, problem.access ? &allowed : nullptr) <=
      1e-10 * std::max(scale, 1e-300))
    return "the gains are additive in rows and columns on the allowed cells "
           "(gain_ij = a_i + b_j), so every allocation with these marginals has the "
           "same total gain and the gains say nothing about a temperature";
  return "";
}

void require_informative_gains(const TransportProblem& problem, const std::string& gains_source) {
  const std::string reason = uninformative_gains_reason(problem);
  if (!reason.empty()) throw InputError(gains_source, reason);
}

namespace {

// The estimate for gains of order one (estimate_temperature rescales);
// `solved_exact`, when given, is the exact coupling at that scale.
TemperatureResult estimate_at_unit_scale(const ObservedAllocation& o,
                                         const TemperatureOptions& options,
                                         const ExactResult* solved_exact) {
  TemperatureResult result;
  result.confidence = options.confidence;
  result.units = o.units;
  result.standard_error = result.ci_low = result.ci_high = kNaN;
  result.observed_gain = o.observed_gain();

  std::optional<ExactResult> own_exact;
  if (!solved_exact) own_exact = solve_exact(o.problem);
  const ExactResult& exact = solved_exact ? *solved_exact : *own_exact;
  const MarginalFit flat = independent_coupling(o.problem, options.sinkhorn_tolerance);
  result.solves = 1;
  if (!exact.optimal() || !flat.converged) {
    result.message =
        "the reference couplings could not be solved: " +
        (exact.optimal() ? "the independent coupling did not converge" : exact.message);
    return result;
  }
  result.optimum_gain = exact.total_gain;
  result.independent_gain = o.problem.gains.cwiseProduct(flat.coupling).sum();
  const double span = result.optimum_gain - result.independent_gain;
  const double slack = options.boundary_tolerance * span;
  if (result.observed_gain >= result.optimum_gain - slack) {
    set_boundary(result, TemperatureStatus::at_optimum,
                 "the observed gain reaches the exact optimum's: epsilon 0");
    result.fitted_gain = result.optimum_gain;
    result.coupling = exact.coupling;
    if (o.units > 0 && options.interval) bound_at_optimum(o, options, flat, span, result);
    return result;
  }
  if (result.observed_gain <= result.independent_gain + slack) {
    set_boundary(result, TemperatureStatus::not_explained_by_noise,
                 "the observed gain is no higher than that of the independent coupling "
                 "(partners chosen regardless of gain), so no positive temperature "
                 "explains it");
    result.fitted_gain = result.independent_gain;
    if (o.units > 0 && options.interval) bound_without_signal(o, options, flat, result);
    return result;
  }

  Profile profile(o, options);
  const double observed = result.observed_gain;
  auto excess = [&](double u) {
    const ProfilePoint p = profile.at(u);
    return RootValue{p.gain - observed, p.beta * p.variance, p.ok};
  };
  // First-order start from beta = 0: G(beta) ~ G(0) + beta V(0).
  const double v0 = conditional_variance(o.problem.gains, flat.coupling);
  const RootOutcome root = find_root(excess, std::log((observed - result.independent_gain) / v0),
                                     -kInf, kInf, true, options.beta_tolerance, profile);
  result.search_steps = root.steps;
  const ProfilePoint best = root.ok ? profile.at(root.u) : ProfilePoint{};
  result.solves += profile.solves();
  if (!best.ok) {
    result.message = best.message.empty() ? "the search for epsilon did not converge within " +
                                                std::to_string(options.max_solves) + " solves"
                                          : best.message;
    return result;
  }
  result.status = TemperatureStatus::estimated;
  result.beta = best.beta;
  result.epsilon = 1.0 / best.beta;
  result.fitted_gain = best.gain;
  result.conditional_variance = best.variance;
  result.coupling = best.coupling;
  if (o.units > 0) {
    result.standard_error = 1.0 / (best.beta * best.beta * std::sqrt(o.units * best.variance));
    if (options.interval) {
      const double flat_loglik = o.shares
                                     .cwiseProduct(flat.coupling.unaryExpr(
                                         [](double x) { return x > 0 ? std::log(x) : 0.0; }))
                                     .sum();
      const long before = profile.solves();
      const Interval interval = likelihood_interval(o, options, best, flat_loglik, profile);
      result.solves += profile.solves() - before;
      if (interval.ok) {
        result.ci_low = 1.0 / interval.beta_high;
        result.ci_high = interval.beta_low > 0 ? 1.0 / interval.beta_low : kInf;
      } else {
        result.message = interval.message;
      }
    }
  }
  return result;
}

}  // namespace

TemperatureResult estimate_temperature(const ObservedAllocation& o,
                                       const TemperatureOptions& options,
                                       const ExactResult* solved_exact) {
  options.validate();
  const double scale = gains_scale(o);
  ObservedAllocation unit = o;
  unit.problem.gains /= scale;
  require_informative_gains(unit.problem, o.sources.gains);
  // The exact coupling does not change with the scale of the gains; its gain does.
  std::optional<ExactResult> unit_exact;
  if (solved_exact) {
    unit_exact = *solved_exact;
    unit_exact->total_gain /= scale;
  }
  TemperatureResult result =
      estimate_at_unit_scale(unit, options, unit_exact ? &*unit_exact : nullptr);
  if (!rescale(result, scale))
    throw InputError(o.sources.gains,
                     "epsilon or its interval leaves the range of double precision at the scale "
                     "of these gains; multiply or divide the gains by a constant (epsilon "
                     "scales with them)");
  return result;
}

std::string TemperatureResult::brief() const {
  std::ostringstream out;
  out.precision(4);
  switch (status) {
    case TemperatureStatus::estimated:
      out << "epsilon " << epsilon;
      if (std::isfinite(standard_error)) out << " (se " << standard_error;
      if (std::isfinite(ci_low)) {
        out << "; " << 100 * confidence << "% interval " << ci_low << " to ";
        if (std::isfinite(ci_high))
          out << ci_high;
        else
          out << "infinity";
      }
      if (std::isfinite(standard_error)) out << ")";
      if (units > 0)
        out << ", N = " << units;
      else
        out << ", shares (no unit count: no interval)";
      return out.str();
    case TemperatureStatus::at_optimum:
      return "epsilon 0: the allocation reaches the exact optimum's gain";
    case TemperatureStatus::not_explained_by_noise:
      return "no temperature: the allocation gains no more than partners chosen at random";
    case TemperatureStatus::not_converged:
      return "not converged: " + message;
    case TemperatureStatus::no_gains:
      return "not estimated: no gains given";
    case TemperatureStatus::not_identified:
      return "not identified: " + message;
  }
  return "";
}

}  // namespace allocsim
