#include "allocsim/analysis/entropic_transport.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <sstream>
#include <vector>

#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/analysis/thread_team.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr double kMinusInfinity = -std::numeric_limits<double>::infinity();
// Loose tolerance of the intermediate epsilon-scaling stages (relative L1
// violation); the last stage runs to the requested tolerance.
constexpr double kStageTolerance = 1e-3;
// Kernel entries are kept at or above exp(-600) ~ 1e-261 (cells without
// access are exactly 0): with u and v within [1e-30, 1e30] every product in
// the matrix-vector loops stays a normal double, so the slow subnormal
// arithmetic (about 100 times slower) never enters them.
constexpr double kSmallestExponent = -600.0;
// A kernel row or column sum below this is treated as underflowed.
constexpr double kUnderflow = 1e-280;
// Rows are processed in this many chunks (fewer when there are fewer rows),
// whatever the number of threads.
constexpr Eigen::Index kChunks = 16;

// Below options.parallel_cells a sweep takes well under a millisecond and
// one thread is used: handing out the work and joining costs more than a
// second thread gains, and on a loaded machine a helper that is not
// scheduled holds up each sweep (measured with allocsim_bench, group
// "threads").
int threads_for_size(const EntropicOptions& options, Eigen::Index n, Eigen::Index m) {
  return static_cast<double>(n) * static_cast<double>(m) < options.parallel_cells ? 1
                                                                                  : options.threads;
}

// The iteration state in normalised form: masses sum to 1 and gains are
// shifted so that their largest allowed value is 0 (disallowed cells hold
// -infinity). Then pi_ij = u_i K_ij v_j with K = exp((G + f + g) / eps).
class SinkhornState {
 public:
  SinkhornState(const TransportProblem& problem, const EntropicOptions& options)
      : options_(options),
        mass_(problem.total_mass()),
        r_(problem.budgets / mass_),
        c_(problem.capacities / mass_),
        chunk_rows_(rows_per_chunk(problem.agents())),
        chunks_(static_cast<int>((problem.agents() + chunk_rows_ - 1) / chunk_rows_)),
        team_(std::max(1, std::min(chunks_, threads_for_size(options, problem.agents(),
                                                             problem.partners())))) {
    if (problem.access) {
      access_ = problem.access->cast<double>();
      shifted_gains_ = (access_.array() > 0).select(problem.gains, kMinusInfinity);
      shift_ = shifted_gains_.maxCoeff();
      shifted_gains_.array() -= shift_;
    } else {
      shift_ = problem.gains.maxCoeff();
      shifted_gains_ = problem.gains.array() - shift_;  // one pass: no copy, then shift
    }
    f_ = Vector::Zero(r_.size());
    g_ = Vector::Zero(c_.size());
  }

  // Potentials of the original problem <-> the normalised, shifted one:
  // pi = mass * exp((G + f + g)/eps) = exp((gains + f_orig + g)/eps) with
  // f_orig = f - shift + eps * log(mass).
  void set_potentials(const DualPotentials& warm, double eps) {
    f_ = warm.agent.array() + shift_ - eps * std::log(mass_);
    g_ = warm.partner;
  }
  DualPotentials potentials() const {
    return {(f_.array() - shift_ + eps_ * std::log(mass_)).matrix(), g_};
  }

  // Runs Sinkhorn sweeps at `eps` until the violation is <= tolerance or the
  // sweep budget is spent; returns true on convergence.
  bool run_stage(double eps, double tolerance, long& sweeps_left) {
    eps_ = eps;
    rebuild_kernel();
    columns_exact_ = false;
    while (sweeps_left > 0) {
      --sweeps_left;
      ++sweeps_;
      if (!row_pass()) {  // a kernel row underflowed: u_ was left as it was
        exact_row_update();
        continue;
      }
      if (columns_exact_) {
        violation_ = row_violation_;
        if (violation_ <= tolerance) return true;  // u_ still matches the check
      }
      u_.swap(next_u_);
      if (columns_underflow()) {
        exact_column_update();
        continue;
      }
      v_ = c_.array() / KTu_.array();
      columns_exact_ = true;
      if (needs_absorption()) absorb_and_rebuild();
    }
    return false;
  }

  // The final coupling and its figures, in the original units. The coupling
  // is diag(u) K diag(v), formed in place in K (no kernel rebuild: the
  // potentials take up u and v by their logarithms), then moved out.
  void finish(EntropicResult& result, const Matrix& gains) {
    const double log_mass = std::log(mass_);
    f_.array() += eps_ * u_.array().log();
    g_.array() += eps_ * v_.array().log();
    const Vector entropy_part = coupling_in_kernel(gains);  // uses u, v and the new g
    u_.setOnes();
    v_.setOnes();
    // H = -sum pi (log pi - 1), log pi = (G + f + g)/eps + log(mass), over
    // the cells with pi > 0; entropy_part_i = sum_j pi_ij (G_ij + g_j) there.
    double minus_entropy = 0;
    for (Eigen::Index i = 0; i < K_.rows(); ++i) {
      const double row_mass = row_sums_[i];
      minus_entropy += entropy_part[i] / eps_ + row_mass * (f_[i] / eps_ + log_mass - 1.0);
    }
    result.marginal_error =
        (row_sums_ - r_).array().abs().sum() + (column_sums_ - c_).array().abs().sum();
    result.total_gain = total_gain_;
    result.entropy = -minus_entropy * mass_;
    result.coupling = std::move(K_);
    K_ = Matrix();
    result.potentials = potentials();
    result.epsilon = eps_;
    result.primal_value = result.total_gain + eps_ * result.entropy;
    result.dual_value = eps_ * mass_ * row_sums_.sum() - result.potentials.agent.dot(r_ * mass_) -
                        result.potentials.partner.dot(c_ * mass_);
    result.iterations = sweeps_;
    result.log_domain_updates = log_updates_;
  }

  double violation() const { return violation_; }
  // Whether every cell of the final coupling is finite: its cells are >= 0,
  // so a row sum is finite exactly when the row is.
  bool coupling_finite() const { return row_sums_.allFinite(); }

 private:
  // Turns K into the coupling mass * u_i K_ij v_j in one pass, row by row,
  // recording the normalised row and column sums and the total gain. Returns,
  // per row, the sum of pi_ij (G_ij + g_j) over the cells with pi_ij > 0 (pi
  // normalised; for the entropy).
  Vector coupling_in_kernel(const Matrix& original_gains) {
    const Eigen::Index m = K_.cols();
    Vector part(K_.rows()), gain(K_.rows());
    row_sums_.resize(K_.rows());
    partial_.resize(m, chunks_);
    team_.run(chunks_, [&](int c) {
      auto column_sums = partial_.col(c);
      column_sums.setZero();
      for (Eigen::Index i = chunk_begin(c), end = chunk_begin(c + 1); i < end; ++i) {
        Eigen::Map<Vector> row(K_.row(i).data(), m);
        row.array() *= u_[i] * v_.array();
        row_sums_[i] = row.sum();
        column_sums += row;
        const Eigen::Map<const Vector> gains(shifted_gains_.row(i).data(), m);
        part[i] = (row.array() > 0).select(row.array() * (gains.array() + g_.array()), 0.0).sum();
        gain[i] = row.dot(Eigen::Map<const Vector>(original_gains.row(i).data(), m));
        row *= mass_;
      }
    });
    column_sums_ = sum_of_chunks();
    total_gain_ = gain.sum() * mass_;
    return part;
  }

  // Chunks of rows: contiguous, the same for any number of threads, so
  // every sum is taken in the same order and the results do not depend on
  // the threads.
  static Eigen::Index rows_per_chunk(Eigen::Index rows) {
    return std::max<Eigen::Index>(1, (rows + kChunks - 1) / kChunks);
  }
  Eigen::Index chunk_begin(int chunk) const {
    return std::min<Eigen::Index>(K_.rows(), chunk * chunk_rows_);
  }
  // The column sums of the chunks, added in chunk order.
  Vector sum_of_chunks() const {
    Vector total = partial_.col(0);
    for (int c = 1; c < chunks_; ++c) total += partial_.col(c);
    return total;
  }

  // One pass over K does the whole row half-sweep and the column products:
  // for each row i, (K v)_i, the row violation |u_i (K v)_i - r_i| of the
  // current u, the new u_i = r_i / (K v)_i (into next_u_), and K^T u
  // accumulated from the same row while it is still in the first-level cache.
  // Reading K once per sweep instead of twice halves the memory traffic.
  // Each thread owns a contiguous block of rows and its own column sums.
  // Returns false when some (K v)_i underflowed (or is not finite).
  bool row_pass() {
    next_u_.resize(K_.rows());
    partial_.resize(K_.cols(), chunks_);
    chunk_violation_.resize(chunks_);
    chunk_underflow_.resize(chunks_);
    team_.run(chunks_, [&](int c) { row_pass_chunk(c); });
    bool underflow = false;
    row_violation_ = 0;
    for (int c = 0; c < chunks_; ++c) {
      row_violation_ += chunk_violation_[c];
      underflow = underflow || chunk_underflow_[c];
    }
    if (underflow) return false;
    KTu_ = sum_of_chunks();
    return true;
  }

  // The row pass over one chunk, four rows at a time: v and the chunk's
  // column sums are read once per four rows of K.
  void row_pass_chunk(int c) {
    const Eigen::Index m = K_.cols();
    double* column_sums = partial_.col(c).data();
    std::fill(column_sums, column_sums + m, 0.0);
    const double* v = v_.data();
    double violation = 0;
    bool underflow = false;
    // u_i = r_i / (K v)_i for a row, and the violation of the current u_i.
    const auto row_scale = [&](Eigen::Index i, double kv) {
      if (!(kv > kUnderflow && kv <= std::numeric_limits<double>::max())) {
        underflow = true;
        return 0.0;
      }
      violation += std::abs(u_[i] * kv - r_[i]);
      return next_u_[i] = r_[i] / kv;
    };
    Eigen::Index i = chunk_begin(c);
    const Eigen::Index end = chunk_begin(c + 1);
    for (; i + 4 <= end; i += 4) {
      const double *k0 = K_.row(i).data(), *k1 = K_.row(i + 1).data(), *k2 = K_.row(i + 2).data(),
                   *k3 = K_.row(i + 3).data();
      double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
#pragma omp simd reduction(+ : s0, s1, s2, s3)
      for (Eigen::Index j = 0; j < m; ++j) {
        s0 += k0[j] * v[j];
        s1 += k1[j] * v[j];
        s2 += k2[j] * v[j];
        s3 += k3[j] * v[j];
      }
      const double a0 = row_scale(i, s0), a1 = row_scale(i + 1, s1), a2 = row_scale(i + 2, s2),
                   a3 = row_scale(i + 3, s3);
#pragma omp simd
      for (Eigen::Index j = 0; j < m; ++j)
        column_sums[j] += a0 * k0[j] + a1 * k1[j] + a2 * k2[j] + a3 * k3[j];
    }
    for (; i < end; ++i) {
      const double* k0 = K_.row(i).data();
      double s0 = 0;
#pragma omp simd reduction(+ : s0)
      for (Eigen::Index j = 0; j < m; ++j) s0 += k0[j] * v[j];
      const double a0 = row_scale(i, s0);
#pragma omp simd
      for (Eigen::Index j = 0; j < m; ++j) column_sums[j] += a0 * k0[j];
    }
    chunk_violation_[c] = violation;
    chunk_underflow_[c] = underflow;
  }

  void rebuild_kernel() {
    K_.resize(shifted_gains_.rows(), shifted_gains_.cols());
    const double inverse = 1.0 / eps_;
    team_.run(chunks_, [&](int c) {
      // Row by row: Eigen vectorises exp on a contiguous row, not on a broadcast expression.
      Eigen::ArrayXd exponent(K_.cols());
      for (Eigen::Index i = chunk_begin(c), end = chunk_begin(c + 1); i < end; ++i) {
        exponent = (shifted_gains_.row(i).array() + g_.transpose().array() + f_[i]) * inverse;
        K_.row(i) = exponent.max(kSmallestExponent).exp();
        if (access_.size()) K_.row(i).array() *= access_.row(i).array();
      }
    });
    u_ = Vector::Ones(r_.size());
    v_ = Vector::Ones(c_.size());
  }

  bool needs_absorption() const {
    const double t = options_.absorb_threshold;
    return u_.maxCoeff() > t || v_.maxCoeff() > t || u_.minCoeff() < 1 / t || v_.minCoeff() < 1 / t;
  }

  void absorb_and_rebuild() {
    f_.array() += eps_ * u_.array().log();
    g_.array() += eps_ * v_.array().log();
    rebuild_kernel();
  }

  bool columns_underflow() const { return !(KTu_.minCoeff() > kUnderflow) || !KTu_.allFinite(); }

  // Where a kernel row has underflowed, the scaling form cannot proceed:
  // f_i = eps log r_i - eps LSE_j((G_ij + g_j)/eps), exactly, in the log domain.
  void exact_row_update() {
    g_.array() += eps_ * v_.array().log();
    for (Eigen::Index i = 0; i < r_.size(); ++i) {
      f_[i] = eps_ * std::log(r_[i]) - eps_ * log_sum_exp(shifted_gains_.row(i).transpose() + g_);
    }
    ++log_updates_;
    rebuild_kernel();
    columns_exact_ = false;
  }

  // The same for columns: g_j = eps log c_j - eps LSE_i((G_ij + f_i)/eps).
  void exact_column_update() {
    f_.array() += eps_ * u_.array().log();
    for (Eigen::Index j = 0; j < c_.size(); ++j) {
      g_[j] = eps_ * std::log(c_[j]) - eps_ * log_sum_exp(shifted_gains_.col(j) + f_);
    }
    ++log_updates_;
    rebuild_kernel();
    columns_exact_ = true;
  }

  // log sum_k exp(x_k / eps), stable; -infinity entries contribute nothing.
  double log_sum_exp(const Vector& x) const {
    const double top = x.maxCoeff();
    if (!std::isfinite(top)) return top;
    return top / eps_ + std::log(((x.array() - top) / eps_).exp().sum());
  }

  const EntropicOptions& options_;
  double mass_;
  Vector r_, c_;
  Matrix shifted_gains_, K_;
  Matrix access_;  // 0/1 as doubles, empty when every pair is allowed
  double shift_ = 0;
  double eps_ = 1;
  Vector f_, g_, u_, v_, next_u_, KTu_;
  Eigen::MatrixXd partial_;  // per-chunk column sums of K^T u
  std::vector<double> chunk_violation_;
  std::vector<char> chunk_underflow_;
  double row_violation_ = 0;       // of the last row pass, before its u update
  Vector row_sums_, column_sums_;  // of the final coupling (normalised)
  double total_gain_ = 0;          // of the final coupling
  Eigen::Index chunk_rows_ = 1;
  int chunks_ = 1;
  ThreadTeam team_;
  double violation_ = std::numeric_limits<double>::infinity();
  long sweeps_ = 0;
  long log_updates_ = 0;
  bool columns_exact_ = false;  // true right after a column update: then only rows can be off
};

// The epsilon of the first stage: the smallest one at which the first kernel
// exp(G / eps) (potentials 0) has no entry below exp(kSmallestExponent),
// i.e. range / 600, or where a warm start left off; never below the target.
// So a target above range / 600 is solved directly, and a smaller one by
// halving from range / 600. Starting at the range instead costs more sweeps
// and kernel rebuilds and saves none (measured at n = m = 1000, tolerance
// 1e-9: at 0.1 of the range 6 sweeps and 1 rebuild instead of 18 sweeps and
// 5 rebuilds, half the time; at 0.01 of the range on squared-distance gains
// 185 sweeps instead of 242).
double first_stage_epsilon(const TransportProblem& problem, const EntropicOptions& options,
                           double warm_epsilon) {
  if (!options.epsilon_scaling) return options.epsilon;
  const double start = warm_epsilon > 0 ? warm_epsilon : gain_range(problem) / -kSmallestExponent;
  return std::max(options.epsilon, start);
}

}  // namespace

void EntropicOptions::validate() const {
  if (!(epsilon > 0) || !std::isfinite(epsilon))
    throw InputError("epsilon", "must be a positive finite number (gain units)");
  if (!(tolerance > 0 && tolerance < 1)) throw InputError("tolerance", "must be in (0, 1)");
  if (max_iterations < 1) throw InputError("max_iterations", "must be at least 1");
  if (!(epsilon_shrink > 0 && epsilon_shrink < 1))
    throw InputError("epsilon_shrink", "must be in (0, 1)");
  if (!(absorb_threshold > 1)) throw InputError("absorb_threshold", "must be greater than 1");
  if (threads < 1) throw InputError("threads", "must be at least 1");
  if (!(parallel_cells >= 0)) throw InputError("parallel_cells", "must be >= 0");
}

constexpr EnumWord<EntropicStatus> kEntropicStatusWords[] = {
    {EntropicStatus::converged, "converged"},
    {EntropicStatus::not_converged, "not_converged"},
    {EntropicStatus::infeasible, "infeasible"}};

std::string to_string(EntropicStatus value) { return word_of(value, kEntropicStatusWords); }

EntropicStatus entropic_status_from_string(const std::string& text) {
  return value_of(text, kEntropicStatusWords, "status");
}

double gain_range(const TransportProblem& problem) {
  if (!problem.access) {  // one vectorised pass for both extremes
    const double* data = problem.gains.data();
    double low = std::numeric_limits<double>::infinity(), high = -low;
#pragma omp simd reduction(min : low) reduction(max : high)
    for (Eigen::Index k = 0; k < problem.gains.size(); ++k) {
      low = std::min(low, data[k]);
      high = std::max(high, data[k]);
    }
    return high > low ? high - low : 0.0;
  }
  double low = std::numeric_limits<double>::infinity();
  double high = -low;
  for (Eigen::Index i = 0; i < problem.agents(); ++i) {
    for (Eigen::Index j = 0; j < problem.partners(); ++j) {
      if (!problem.allowed(i, j)) continue;
      low = std::min(low, problem.gains(i, j));
      high = std::max(high, problem.gains(i, j));
    }
  }
  return high > low ? high - low : 0.0;
}

std::string EntropicResult::brief() const {
  std::ostringstream out;
  out.precision(6);
  out << "entropic: " << to_string(status) << ", epsilon " << epsilon;
  if (status == EntropicStatus::infeasible) {
    out << " (" << message << ")";
    return out.str();
  }
  out << ", total gain " << total_gain << ", " << iterations << " iterations in " << stages
      << " stage" << (stages == 1 ? "" : "s");
  if (log_domain_updates > 0) out << " (" << log_domain_updates << " log-domain updates)";
  out << ", marginal error " << marginal_error << ", " << seconds * 1e3 << " ms";
  return out.str();
}

EntropicResult solve_entropic(const TransportProblem& problem, const EntropicOptions& options,
                              const DualPotentials* warm_start, double warm_epsilon) {
  options.validate();
  validate(problem);  // negative, non-finite or unbalanced masses are input errors, not NaN
  const auto started = std::chrono::steady_clock::now();
  EntropicResult result;
  result.epsilon = options.epsilon;
  if (problem.access) {
    result.message = explain_infeasibility(problem);
    if (!result.message.empty()) {
      result.status = EntropicStatus::infeasible;
      return result;
    }
  }

  SinkhornState state(problem, options);
  double eps = first_stage_epsilon(problem, options, warm_start ? warm_epsilon : 0);
  if (warm_start) state.set_potentials(*warm_start, eps);
  long sweeps_left = options.max_iterations;
  bool converged = false;
  for (;;) {
    const bool last = eps <= options.epsilon;
    ++result.stages;
    const double tolerance =
        last ? options.tolerance : std::max(options.tolerance, kStageTolerance);
    converged = state.run_stage(eps, tolerance, sweeps_left) && last;
    if (last || sweeps_left == 0) break;
    eps = std::max(options.epsilon, eps * options.epsilon_shrink);
  }
  state.finish(result, problem.gains);
  if (!state.coupling_finite()) {
    result.status = EntropicStatus::not_converged;
    result.message = "the iterations left floating-point range; try a larger epsilon";
  } else if (converged) {
    result.status = EntropicStatus::converged;
  } else {
    result.status = EntropicStatus::not_converged;
    std::ostringstream msg;
    msg << "marginal violation " << result.marginal_error << " above tolerance "
        << options.tolerance << " after " << result.iterations
        << " iterations; raise max_iterations or epsilon";
    if (eps > options.epsilon) msg << " (stopped at epsilon " << eps << ")";
    result.message = msg.str();
  }
  result.seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace allocsim
