#include "allocsim/sim/scenario.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"

namespace allocsim {
namespace {

constexpr EnumWord<GainsKind> kGainsKindWords[] = {{GainsKind::rank_product, "rank-product"},
                                                   {GainsKind::trait_distance, "trait-distance"},
                                                   {GainsKind::random, "random"},
                                                   {GainsKind::features, "features"},
                                                   {GainsKind::file, "file"}};
constexpr EnumWord<MassKind> kMassKindWords[] = {{MassKind::uniform, "uniform"},
                                                 {MassKind::zipf, "zipf"},
                                                 {MassKind::lognormal, "lognormal"},
                                                 {MassKind::file, "file"}};
constexpr EnumWord<AccessKind> kAccessKindWords[] = {{AccessKind::full, "full"},
                                                     {AccessKind::threshold, "threshold"},
                                                     {AccessKind::random, "random"},
                                                     {AccessKind::file, "file"}};

void require(bool ok, const char* key, const std::string& what) {
  if (!ok) throw InputError(key, what);
}

Matrix gains_from_file(const ScenarioOptions& o) {
  require(!o.gains_file.empty(), "gains_file", "is needed when gains = file");
  Matrix gains = read_matrix_csv(o.gains_file).values;
  const bool shape_given = o.agents > 0 || o.partners > 0;
  if (shape_given && (gains.rows() != o.agents || gains.cols() != o.partners)) {
    throw InputError(o.gains_file, "is " + std::to_string(gains.rows()) + "x" +
                                       std::to_string(gains.cols()) + " but agents x partners is " +
                                       std::to_string(o.agents) + "x" + std::to_string(o.partners));
  }
  return gains;
}

Matrix make_gains(const ScenarioOptions& o, std::uint64_t run, long n, long m) {
  if (o.gains == GainsKind::file) return gains_from_file(o);  // taken as given, not scaled
  Matrix gains(n, m);
  if (o.gains == GainsKind::random) {
    RandomStream rng(o.seed, run, StreamId::gains);
    for (long i = 0; i < n; ++i)
      for (long j = 0; j < m; ++j) gains(i, j) = rng.uniform();
    return gains * o.gains_scale;
  }
  const ScenarioTraits traits = scenario_traits(o, run);
  if (traits.distance) {
    for (long i = 0; i < n; ++i)
      for (long j = 0; j < m; ++j)
        gains(i, j) =
            -std::pow(std::abs(traits.rows(i, 0) - traits.columns(j, 0)), o.gains_exponent);
  } else {
    gains = traits.rows * traits.columns.transpose();
  }
  if (o.gains == GainsKind::features) gains /= std::sqrt(static_cast<double>(traits.rows.cols()));
  return gains * o.gains_scale;
}

Vector make_masses(MassKind kind, double exponent, double spread, const std::string& file,
                   long size, RandomStream& rng, const char* file_key, const char* count_key) {
  Vector mass(size);
  switch (kind) {
    case MassKind::uniform:
      mass.setOnes();
      break;
    case MassKind::zipf:
      for (long k = 0; k < size; ++k) mass[k] = std::pow(static_cast<double>(k + 1), -exponent);
      break;
    case MassKind::lognormal:
      for (long k = 0; k < size; ++k) mass[k] = std::exp(spread * rng.normal());
      break;
    case MassKind::file: {
      require(!file.empty(), file_key, "is needed when its generator is 'file'");
      mass = read_vector_csv(file).values;
      if (mass.size() != size) {
        throw InputError(file, "has " + std::to_string(mass.size()) + " values but " + count_key +
                                   " is " + std::to_string(size));
      }
      for (long k = 0; k < size; ++k) {
        if (!(mass[k] > 0) || !std::isfinite(mass[k])) {
          throw InputError(file, "value " + std::to_string(k + 1) +
                                     " is not a positive number; every agent needs a budget "
                                     "and every partner a capacity");
        }
      }
      break;
    }
  }
  return mass / mass.sum();
}

// Lowers difficulties (hardest partner first) until every set of hardest
// partners fits the agents that can reach it with room to spare:
// capacity(partners with d >= d_j) <= (1 - kThresholdSlack) * budget(agents
// with a >= d_j). For a nested mask this is Gale's supply-demand condition,
// so the problem is feasible.
constexpr double kThresholdSlack = 0.1;

void make_threshold_feasible(const Vector& capability, Vector& difficulty, const Vector& budgets,
                             const Vector& capacities) {
  const long n = capability.size(), m = difficulty.size();
  std::vector<long> agents(static_cast<std::size_t>(n)), partners(static_cast<std::size_t>(m));
  for (long i = 0; i < n; ++i) agents[static_cast<std::size_t>(i)] = i;
  for (long j = 0; j < m; ++j) partners[static_cast<std::size_t>(j)] = j;
  std::sort(agents.begin(), agents.end(),
            [&](long a, long b) { return capability[a] > capability[b]; });
  std::sort(partners.begin(), partners.end(),
            [&](long a, long b) { return difficulty[a] > difficulty[b]; });
  double capacity_so_far = 0, budget_reached = 0, ceiling = 1.0;
  std::size_t reached = 0;  // agents[0..reached) have capability >= current difficulty
  for (std::size_t k = 0; k < partners.size(); ++k) {
    const long j = partners[k];
    difficulty[j] = std::min(difficulty[j], ceiling);
    capacity_so_far += capacities[j];
    const bool last = k + 1 == partners.size();
    auto fits = [&] {
      return last ? reached == agents.size()
                  : capacity_so_far <= (1 - kThresholdSlack) * budget_reached;
    };
    while (reached < agents.size() && capability[agents[reached]] >= difficulty[j]) {
      budget_reached += budgets[agents[reached++]];
    }
    while (!fits() && reached < agents.size()) {
      difficulty[j] = capability[agents[reached]];
      while (reached < agents.size() && capability[agents[reached]] >= difficulty[j]) {
        budget_reached += budgets[agents[reached++]];
      }
    }
    ceiling = difficulty[j];
  }
}

AccessMask threshold_access(RandomStream& rng, const Vector& budgets, const Vector& capacities) {
  const long n = budgets.size(), m = capacities.size();
  Vector capability(n), difficulty(m);
  for (long i = 0; i < n; ++i) capability[i] = rng.uniform();
  for (long j = 0; j < m; ++j) difficulty[j] = rng.uniform();
  Eigen::Index best = 0;
  capability.maxCoeff(&best);
  capability[best] = 1.0;
  make_threshold_feasible(capability, difficulty, budgets, capacities);
  AccessMask access(n, m);
  for (long i = 0; i < n; ++i)
    for (long j = 0; j < m; ++j) access(i, j) = capability[i] >= difficulty[j] ? 1 : 0;
  return access;
}

AccessMask random_access(RandomStream& rng, long n, long m, double density) {
  AccessMask access(n, m);
  for (long i = 0; i < n; ++i)
    for (long j = 0; j < m; ++j) access(i, j) = rng.uniform() < density ? 1 : 0;
  for (long i = 0; i < n; ++i) {
    if (access.row(i).cast<int>().sum() == 0) access(i, static_cast<long>(rng.below(m))) = 1;
  }
  for (long j = 0; j < m; ++j) {
    if (access.col(j).cast<int>().sum() == 0) access(static_cast<long>(rng.below(n)), j) = 1;
  }
  return access;
}

void require_every_row_and_column_allowed(const AccessMask& access, const std::string& source) {
  for (long i = 0; i < access.rows(); ++i) {
    if (access.row(i).cast<int>().sum() == 0) {
      throw InputError(source, "agent " + std::to_string(i + 1) +
                                   " has no accessible partner (its row is all 0)");
    }
  }
  for (long j = 0; j < access.cols(); ++j) {
    if (access.col(j).cast<int>().sum() == 0) {
      throw InputError(source, "partner " + std::to_string(j + 1) +
                                   " has no agent that may use it (its column is all 0)");
    }
  }
}

}  // namespace

std::string to_string(GainsKind kind) { return word_of(kind, kGainsKindWords); }
std::string to_string(MassKind kind) { return word_of(kind, kMassKindWords); }
std::string to_string(AccessKind kind) { return word_of(kind, kAccessKindWords); }
GainsKind gains_kind_from_string(const std::string& text, const std::string& where) {
  return value_of(text, kGainsKindWords, where);
}
MassKind mass_kind_from_string(const std::string& text, const std::string& where) {
  return value_of(text, kMassKindWords, where);
}
AccessKind access_kind_from_string(const std::string& text, const std::string& where) {
  return value_of(text, kAccessKindWords, where);
}
std::vector<std::string> gains_kind_words() { return words_of(kGainsKindWords); }
std::vector<std::string> mass_kind_words() { return words_of(kMassKindWords); }
std::vector<std::string> access_kind_words() { return words_of(kAccessKindWords); }

void ScenarioOptions::validate() const {
  if (gains != GainsKind::file) {
    require(agents >= 1, "agents", "must be at least 1");
    require(partners >= 1, "partners", "must be at least 1");
  }
  require(gains_scale > 0 && std::isfinite(gains_scale), "gains_scale", "must be > 0");
  require(gains_exponent > 0, "gains_exponent", "must be > 0");
  require(gains_rank >= 1, "gains_rank", "must be at least 1");
  require(budgets_exponent >= 0, "budgets_exponent", "must be >= 0");
  require(budgets_spread >= 0, "budgets_spread", "must be >= 0");
  require(capacities_exponent >= 0, "capacities_exponent", "must be >= 0");
  require(capacities_spread >= 0, "capacities_spread", "must be >= 0");
  require(access_density > 0 && access_density <= 1, "access_density", "must be in (0, 1]");
}

ScenarioTraits scenario_traits(const ScenarioOptions& o, std::uint64_t run) {
  const long n = o.agents, m = o.partners;
  ScenarioTraits traits;
  switch (o.gains) {
    case GainsKind::rank_product:
      traits.rows.resize(n, 1);
      traits.columns.resize(m, 1);
      for (long i = 0; i < n; ++i) traits.rows(i, 0) = static_cast<double>(i + 1) / n;
      for (long j = 0; j < m; ++j) traits.columns(j, 0) = static_cast<double>(j + 1) / m;
      traits.names = {"rank"};
      break;
    case GainsKind::trait_distance: {
      RandomStream rng(o.seed, run, StreamId::gains);
      traits.rows.resize(n, 1);
      traits.columns.resize(m, 1);
      for (long i = 0; i < n; ++i) traits.rows(i, 0) = rng.uniform();
      for (long j = 0; j < m; ++j) traits.columns(j, 0) = rng.uniform();
      traits.names = {"trait"};
      traits.distance = true;
      break;
    }
    case GainsKind::features: {
      RandomStream rng(o.seed, run, StreamId::gains);
      const long k = o.gains_rank;
      traits.rows.resize(n, k);
      traits.columns.resize(m, k);
      for (long i = 0; i < n; ++i)
        for (long c = 0; c < k; ++c) traits.rows(i, c) = rng.normal();
      for (long j = 0; j < m; ++j)
        for (long c = 0; c < k; ++c) traits.columns(j, c) = rng.normal();
      for (long c = 1; c <= k; ++c) traits.names.push_back("feature " + std::to_string(c));
      break;
    }
    case GainsKind::random:
    case GainsKind::file:
      break;
  }
  return traits;
}

TransportProblem make_scenario(const ScenarioOptions& o, std::uint64_t run) {
  o.validate();
  TransportProblem problem;
  problem.gains =
      o.gains == GainsKind::file ? gains_from_file(o) : make_gains(o, run, o.agents, o.partners);
  const long n = problem.gains.rows(), m = problem.gains.cols();
  RandomStream budget_rng(o.seed, run, StreamId::budgets);
  problem.budgets = make_masses(o.budgets, o.budgets_exponent, o.budgets_spread, o.budgets_file, n,
                                budget_rng, "budgets_file", "agents");
  RandomStream capacity_rng(o.seed, run, StreamId::capacities);
  problem.capacities =
      make_masses(o.capacities, o.capacities_exponent, o.capacities_spread, o.capacities_file, m,
                  capacity_rng, "capacities_file", "partners");
  RandomStream access_rng(o.seed, run, StreamId::access);
  switch (o.access) {
    case AccessKind::full:
      break;
    case AccessKind::threshold:
      problem.access = threshold_access(access_rng, problem.budgets, problem.capacities);
      break;
    case AccessKind::random:
      problem.access = random_access(access_rng, n, m, o.access_density);
      break;
    case AccessKind::file: {
      require(!o.access_file.empty(), "access_file", "is needed when access = file");
      AccessMask access = read_access_csv(o.access_file);
      if (access.rows() != n || access.cols() != m) {
        throw InputError(o.access_file, "is " + std::to_string(access.rows()) + "x" +
                                            std::to_string(access.cols()) + " but the gains are " +
                                            std::to_string(n) + "x" + std::to_string(m));
      }
      require_every_row_and_column_allowed(access, o.access_file);
      problem.access = std::move(access);
      break;
    }
  }
  ProblemSources sources;
  sources.gains = o.gains == GainsKind::file ? o.gains_file : "gains";
  sources.budgets = o.budgets == MassKind::file ? o.budgets_file : "budgets";
  sources.capacities = o.capacities == MassKind::file ? o.capacities_file : "capacities";
  sources.access = o.access == AccessKind::file ? o.access_file : "access";
  validate(problem, sources, 1e-9);
  return problem;
}

}  // namespace allocsim
