#include "allocsim/analysis/exact_transport.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <queue>
#include <random>
#include <string>
#include <vector>

#include "allocsim/core/error.hpp"

using namespace allocsim;

namespace {

// Relative L1 marginal error allowed: masses are rounded to 1e12 units, so
// each agent or partner is off by at most total/1e12.
constexpr double kMarginalTolerance = 1e-9;
// Dual feasibility and complementary slackness, relative to the gain range.
constexpr double kSlackTolerance = 1e-9;
// |primal - dual| relative to (|primal| + gain range * total mass).
constexpr double kGapTolerance = 1e-9;
// Agreement with a published optimum, relative.
constexpr double kPublishedTolerance = 1e-9;
// Instances per randomised test.
constexpr int kRandomInstances = 40;

// Base seed from Catch's --rng-seed (0 unless given); each instance adds its index.
unsigned base_seed() { return Catch::rngSeed(); }

enum class GainFamily { uniform, integer_ties, shifted_large };

// The north-west corner rule: fill cells left to right, top to bottom,
// each as much as the remaining budget and capacity allow.
Matrix north_west_corner(const Vector& budgets, const Vector& capacities) {
  Matrix pi = Matrix::Zero(budgets.size(), capacities.size());
  Vector r = budgets, c = capacities;
  Eigen::Index i = 0, j = 0;
  while (i < r.size() && j < c.size()) {
    const double amount = std::min(r[i], c[j]);
    pi(i, j) = amount;
    r[i] -= amount;
    c[j] -= amount;
    if (r[i] <= c[j])
      ++i;
    else
      ++j;
  }
  return pi;
}

Vector random_masses(std::mt19937_64& rng, Eigen::Index size) {
  std::uniform_real_distribution<double> unit(0.05, 1.0);
  Vector v(size);
  for (Eigen::Index k = 0; k < size; ++k) v[k] = unit(rng);
  return v / v.sum();
}

Matrix random_gains(std::mt19937_64& rng, Eigen::Index n, Eigen::Index m, GainFamily family) {
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  std::uniform_int_distribution<int> small(0, 3);
  Matrix g(n, m);
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < m; ++j) {
      switch (family) {
        case GainFamily::uniform:
          g(i, j) = unit(rng);
          break;
        case GainFamily::integer_ties:
          g(i, j) = small(rng);
          break;
        case GainFamily::shifted_large:
          g(i, j) = 1e3 * unit(rng) - 700;
          break;
      }
    }
  }
  return g;
}

// A random problem; with `density` < 1 the access mask keeps a random share
// of the cells plus the support of the north-west corner coupling, so that
// a coupling always exists.
TransportProblem random_problem(unsigned seed, double density) {
  std::mt19937_64 rng(seed);
  std::uniform_int_distribution<int> size(1, 30);
  const Eigen::Index n = size(rng), m = size(rng);
  TransportProblem p;
  p.gains = random_gains(rng, n, m, static_cast<GainFamily>(seed % 3));
  p.budgets = random_masses(rng, n);
  p.capacities = random_masses(rng, m);
  if (density < 1) {
    std::bernoulli_distribution keep(density);
    const Matrix corner = north_west_corner(p.budgets, p.capacities);
    AccessMask access(n, m);
    for (Eigen::Index i = 0; i < n; ++i) {
      for (Eigen::Index j = 0; j < m; ++j) access(i, j) = (corner(i, j) > 0 || keep(rng)) ? 1 : 0;
    }
    p.access = access;
  }
  return p;
}

double allowed_gain_range(const TransportProblem& p) {
  double lo = INFINITY, hi = -INFINITY;
  for (Eigen::Index i = 0; i < p.agents(); ++i) {
    for (Eigen::Index j = 0; j < p.partners(); ++j) {
      if (!p.allowed(i, j)) continue;
      lo = std::min(lo, p.gains(i, j));
      hi = std::max(hi, p.gains(i, j));
    }
  }
  return std::max(hi - lo, 1.0);
}

// Components of the bipartite graph of positive cells, by breadth-first
// search (independent of the library's union-find).
long count_components(const Matrix& pi) {
  const Eigen::Index n = pi.rows(), m = pi.cols();
  std::vector<bool> seen(static_cast<std::size_t>(n + m), false);
  long components = 0;
  for (Eigen::Index start = 0; start < n + m; ++start) {
    if (seen[start]) continue;
    ++components;
    std::queue<Eigen::Index> queue;
    queue.push(start);
    seen[start] = true;
    while (!queue.empty()) {
      const Eigen::Index v = queue.front();
      queue.pop();
      for (Eigen::Index w = 0; w < (v < n ? m : n); ++w) {
        const double cell = v < n ? pi(v, w) : pi(w, v - n);
        const Eigen::Index u = v < n ? n + w : w;
        if (cell > 0 && !seen[u]) {
          seen[u] = true;
          queue.push(u);
        }
      }
    }
  }
  return components;
}

TransportProblem from_cost_table(const Matrix& cost, const Vector& supply, const Vector& demand) {
  TransportProblem p;
  p.gains = -cost;  // minimum cost = maximum gain with gains = -cost
  p.budgets = supply;
  p.capacities = demand;
  return p;
}

}  // namespace

TEST_CASE("the exact coupling meets the budgets and capacities") {
  for (int k = 0; k < kRandomInstances; ++k) {
    const unsigned seed = base_seed() * 1000 + k;
    const auto p = random_problem(seed, k % 2 == 0 ? 1.0 : 0.3);
    INFO("seed " << seed << " (base seed from --rng-seed " << base_seed() << "), " << p.agents()
                 << "x" << p.partners());
    const auto result = solve_exact(p);
    REQUIRE(result.optimal());
    const Matrix& pi = result.coupling;
    const double row_error = (pi.rowwise().sum() - p.budgets).lpNorm<1>();
    const double column_error = (pi.colwise().sum().transpose() - p.capacities).lpNorm<1>();
    CHECK(row_error + column_error <= kMarginalTolerance);
    CHECK(result.marginal_error == Approx(row_error + column_error).margin(1e-15));
    CHECK(pi.minCoeff() >= 0);
    for (Eigen::Index i = 0; i < p.agents(); ++i) {
      for (Eigen::Index j = 0; j < p.partners(); ++j) {
        if (!p.allowed(i, j)) CHECK(pi(i, j) == 0);
      }
    }
  }
}

// LP duality (common practice): a feasible plan and a feasible dual with
// equal objective values, or with complementary slackness, are both optimal.
TEST_CASE("the dual potentials certify the exact coupling as optimal") {
  for (int k = 0; k < kRandomInstances; ++k) {
    const unsigned seed = base_seed() * 1000 + 500 + k;
    const auto p = random_problem(seed, k % 2 == 0 ? 1.0 : 0.4);
    INFO("seed " << seed << ", " << p.agents() << "x" << p.partners());
    const auto result = solve_exact(p);
    REQUIRE(result.optimal());
    const double range = allowed_gain_range(p);
    double worst_violation = 0, worst_support_slack = 0;
    for (Eigen::Index i = 0; i < p.agents(); ++i) {
      for (Eigen::Index j = 0; j < p.partners(); ++j) {
        if (!p.allowed(i, j)) continue;
        const double slack =
            result.agent_potential[i] + result.partner_potential[j] - p.gains(i, j);
        worst_violation = std::max(worst_violation, -slack);
        if (result.coupling(i, j) > 0)
          worst_support_slack = std::max(worst_support_slack, std::abs(slack));
      }
    }
    CHECK(worst_violation <= kSlackTolerance * range);      // dual feasible on allowed cells
    CHECK(worst_support_slack <= kSlackTolerance * range);  // complementary slackness
    const double dual =
        p.budgets.dot(result.agent_potential) + p.capacities.dot(result.partner_potential);
    CHECK(std::abs(dual - result.total_gain) <=
          kGapTolerance * (std::abs(result.total_gain) + range));
    CHECK(result.total_gain == Approx(total_gain(p, result.coupling)).epsilon(1e-12));
  }
}

// A basic solution of the transportation LP has at most n+m-1 positive cells
// on a forest (common practice: the basis of a transportation problem is a
// spanning tree of the bipartite graph).
TEST_CASE("the exact coupling is a forest with at most n+m-1 links") {
  for (int k = 0; k < kRandomInstances; ++k) {
    const unsigned seed = base_seed() * 1000 + 900 + k;
    const auto p = random_problem(seed, k % 2 == 0 ? 1.0 : 0.3);
    INFO("seed " << seed << ", " << p.agents() << "x" << p.partners());
    const auto result = solve_exact(p);
    REQUIRE(result.optimal());
    const long links = static_cast<long>((result.coupling.array() > 0).count());
    CHECK(result.support_size == links);
    CHECK(links <= p.agents() + p.partners() - 1);
    // A graph is a forest exactly when links = nodes - components.
    CHECK(links == p.agents() + p.partners() - count_components(result.coupling));
    CHECK(result.support_is_forest);
  }
}

// For a supermodular gain (x_i y_j with x, y increasing) the north-west
// corner coupling is optimal (Hoffman 1963, "On simple linear programming
// problems", Monge property; from memory), and with strictly increasing x, y
// it is the only optimum.
TEST_CASE("for a supermodular gain the optimum is the north-west corner coupling") {
  for (int k = 0; k < 10; ++k) {
    const unsigned seed = base_seed() * 1000 + 200 + k;
    INFO("seed " << seed);
    std::mt19937_64 rng(seed);
    std::uniform_int_distribution<int> size(2, 40);
    const Eigen::Index n = size(rng), m = size(rng);
    std::uniform_real_distribution<double> unit(0.0, 1.0);
    std::vector<double> x(n), y(m);
    for (auto& v : x) v = unit(rng);
    for (auto& v : y) v = unit(rng);
    std::sort(x.begin(), x.end());
    std::sort(y.begin(), y.end());
    TransportProblem p;
    p.gains.resize(n, m);
    for (Eigen::Index i = 0; i < n; ++i) {
      for (Eigen::Index j = 0; j < m; ++j) p.gains(i, j) = x[i] * y[j];
    }
    p.budgets = random_masses(rng, n);
    p.capacities = random_masses(rng, m);
    const auto result = solve_exact(p);
    REQUIRE(result.optimal());
    const Matrix corner = north_west_corner(p.budgets, p.capacities);
    CHECK((result.coupling - corner).cwiseAbs().maxCoeff() <= 1e-9);
    CHECK(result.total_gain == Approx(total_gain(p, corner)).epsilon(1e-9));
  }
}

// NAG Library, routine H03ABF (transportation), example program: data
// https://support.nag.com/numeric/nl/nagdoc_latest/examples/data/h03abfe.d.html
// (availabilities 1, 5, 6; requirements 4, 4, 4), published result
// "Total cost = 77.0" with shipments (goods, from, to) 4 3 2, 2 3 3, 1 2 3,
// 1 1 3, 4 2 1 at
// https://support.nag.com/numeric/nl/nagdoc_30.3/examples/baseresults/h03abfe.r.html
// (that optimum is unique: scipy HiGHS finds each cell's range on the optimal
// face to be a single value).
TEST_CASE("NAG's H03ABF worked example reaches its published minimum cost of 77") {
  Matrix cost(3, 3);
  cost << 8, 8, 11,  //
      5, 8, 14,      //
      4, 3, 10;
  Vector supply(3), demand(3);
  supply << 1, 5, 6;
  demand << 4, 4, 4;
  const auto result = solve_exact(from_cost_table(cost, supply, demand));
  REQUIRE(result.optimal());
  CHECK(-result.total_gain == Approx(77.0).epsilon(kPublishedTolerance));
  Matrix published(3, 3);
  published << 0, 0, 1,  //
      4, 0, 1,           //
      0, 4, 2;
  CHECK((result.coupling - published).cwiseAbs().maxCoeff() <= 1e-9);
}

// Dantzig, G. B., Linear Programming and Extensions, Princeton University
// Press 1963, section 3.3 (the cannery problem, as in the GAMS model library
// TRNSPORT): costs are 90 $ per case per thousand miles times the distances,
// in thousands of $. Published optimum 153.675, e.g. GLPK's glpsol output
// "Objective: cost = 153.675 (MINimum)" for its transp.mod example. Supply
// (950) exceeds demand (900) there; a dummy market of 50 at zero cost
// balances it without changing the optimum (common practice).
TEST_CASE("Dantzig's cannery problem reaches its published minimum cost of 153.675") {
  Matrix distance(2, 3);
  distance << 2.5, 1.7, 1.8,  // Seattle to New York, Chicago, Topeka
      2.5, 1.8, 1.4;          // San Diego
  Matrix cost = Matrix::Zero(2, 4);
  cost.leftCols(3) = 90.0 * distance / 1000.0;
  Vector supply(2), demand(4);
  supply << 350, 600;
  demand << 325, 300, 275, 50;  // the last market is the dummy
  const auto result = solve_exact(from_cost_table(cost, supply, demand));
  REQUIRE(result.optimal());
  CHECK(-result.total_gain == Approx(153.675).epsilon(kPublishedTolerance));
}

TEST_CASE("an agent with no allowed partner makes the problem infeasible and is named") {
  TransportProblem p;
  p.gains = Matrix::Ones(3, 2);
  p.budgets = Vector::Constant(3, 1.0 / 3);
  p.capacities = Vector::Constant(2, 0.5);
  AccessMask access = AccessMask::Ones(3, 2);
  access.row(1).setZero();
  p.access = access;
  const auto result = solve_exact(p);
  CHECK(result.status == ExactStatus::infeasible);
  CHECK(result.message == "agent 2 may use no partner (all-zero access row)");
  CHECK(explain_infeasibility(p) == result.message);
}

TEST_CASE("a partner no agent may use makes the problem infeasible and is named") {
  TransportProblem p;
  p.gains = Matrix::Ones(2, 12);
  p.budgets = Vector::Constant(2, 0.5);
  p.capacities = Vector::Constant(12, 1.0 / 12);
  AccessMask access = AccessMask::Zero(2, 12);
  access.col(0).setOnes();
  access.col(5).setOnes();
  p.access = access;
  const auto result = solve_exact(p);
  CHECK(result.status == ExactStatus::infeasible);
  CHECK(result.message ==
        "partners 2, 3, 4, 5, 7, 8, 9, 10 and 2 more may be used by no agent (all-zero access "
        "columns)");
}

// Hall's condition (Hall 1935; common practice for transportation
// feasibility): every group of agents must fit into the capacity of the
// partners it may use.
TEST_CASE("a group of agents whose budgets exceed their partners' capacities is named") {
  TransportProblem p;
  p.gains = Matrix::Zero(4, 4);
  p.budgets = Vector(4);
  p.budgets << 0.3, 0.1, 0.3, 0.3;
  p.capacities = Vector(4);
  p.capacities << 0.25, 0.2, 0.25, 0.3;
  AccessMask access = AccessMask::Ones(4, 4);
  access.row(0) << 0, 1, 0, 0;  // agents 1 and 3 may only use partner 2
  access.row(2) << 0, 1, 0, 0;
  p.access = access;
  const auto result = solve_exact(p);
  CHECK(result.status == ExactStatus::infeasible);
  CHECK(result.message == "agents 1, 3 (budgets 0.6 in all) may only use partner 2 (capacity 0.2)");
}

TEST_CASE("a group confined to several partners is named with their joint capacity") {
  TransportProblem p;
  p.gains = Matrix::Zero(5, 5);
  p.budgets = Vector(5);
  p.budgets << 0.2, 0.15, 0.25, 0.15, 0.25;
  p.capacities = Vector(5);
  p.capacities << 0.3, 0.15, 0.25, 0.15, 0.15;
  AccessMask access = AccessMask::Ones(5, 5);
  access.row(2) << 0, 1, 0, 1, 0;  // agents 3 and 5 may only use partners 2 and 4
  access.row(4) << 0, 1, 0, 1, 0;
  p.access = access;
  CHECK(explain_infeasibility(p) ==
        "agents 3, 5 (budgets 0.5 in all) may only use partners 2, 4 (capacities 0.3 in all)");
}

TEST_CASE("when the partners' side is the shorter account, the partner group is named") {
  TransportProblem p;
  const int n = 6;
  p.gains = Matrix::Zero(n, 3);
  p.budgets = Vector::Constant(n, 1.0 / n);
  p.capacities = Vector(3);
  p.capacities << 0.5, 0.25, 0.25;
  AccessMask access = AccessMask::Ones(n, 3);
  access.col(0).setZero();
  access(4, 0) = 1;  // only agent 5 may use partner 1, which needs 0.5
  p.access = access;
  const auto result = solve_exact(p);
  CHECK(result.status == ExactStatus::infeasible);
  CHECK(result.message == "partner 1 (capacity 0.5) may only be used by agent 5 (budget 0.166667)");
}

TEST_CASE("a tight group that rounding would break still gets a coupling") {
  // Block-diagonal access: agent 1 with partner 1, agent 2 with partners 2, 3.
  // At 1000 units the largest-remainder rounding gives agent 1 333 units but
  // partner 1 334, so the rounded network has no exact flow.
  TransportProblem p;
  p.gains = Matrix::Ones(2, 3);
  p.budgets = Vector(2);
  p.budgets << 0.33345, 0.66655;
  p.capacities = Vector(3);
  p.capacities << 0.33345, 0.3333, 0.33325;
  AccessMask access(2, 3);
  access << 1, 0, 0,  //
      0, 1, 1;
  p.access = access;
  CHECK(explain_infeasibility(p).empty());
  ExactOptions options;
  options.mass_units = 1e3;
  const auto result = solve_exact(p, options);
  REQUIRE(result.optimal());
  CHECK(result.marginal_error <= 4.0 / options.mass_units);
  CHECK(result.coupling(0, 1) == 0);
  CHECK(result.coupling(1, 0) == 0);
  CHECK(result.support_is_forest);
}

TEST_CASE("a feasible access mask has no explanation") {
  TransportProblem p;
  p.gains = Matrix::Zero(2, 2);
  p.budgets = Vector::Constant(2, 0.5);
  p.capacities = Vector::Constant(2, 0.5);
  p.access = AccessMask::Identity(2, 2);
  CHECK(explain_infeasibility(p).empty());
  p.access.reset();
  CHECK(explain_infeasibility(p).empty());
}

TEST_CASE("the forest check finds a cycle in a hand-made support") {
  Matrix square(2, 2);
  square << 1, 1,  //
      1, 1;
  CHECK_FALSE(support_is_forest(square));  // a1-p1-a2-p2-a1

  Matrix path(3, 3);
  path << 1, 1, 0,  //
      0, 1, 1,      //
      0, 0, 1;
  CHECK(support_is_forest(path));  // a1-p1, a1-p2, a2-p2, a2-p3, a3-p3: a path

  Matrix six_cycle(3, 3);
  six_cycle << 1, 1, 0,  //
      0, 1, 1,           //
      1, 0, 1;
  CHECK_FALSE(support_is_forest(six_cycle));

  Matrix two_trees = Matrix::Zero(4, 4);
  two_trees(0, 0) = two_trees(1, 0) = two_trees(2, 3) = two_trees(3, 3) = two_trees(3, 2) = 1;
  CHECK(support_is_forest(two_trees));

  square(1, 1) = 1e-12;
  CHECK(support_is_forest(square, 1e-9));  // cells at or below the threshold do not count
  CHECK(support_is_forest(Matrix::Zero(3, 2)));
}

TEST_CASE("a single agent sends its budget across all partners") {
  TransportProblem p;
  p.gains = Matrix(1, 3);
  p.gains << 1, 5, 2;
  p.budgets = Vector::Constant(1, 1.0);
  p.capacities = Vector(3);
  p.capacities << 0.2, 0.3, 0.5;
  const auto result = solve_exact(p);
  REQUIRE(result.optimal());
  CHECK(result.total_gain == Approx(0.2 + 1.5 + 1.0).epsilon(1e-12));
  CHECK(result.support_size == 3);
}

TEST_CASE("exact status words read back to the same status") {
  for (auto status : {ExactStatus::optimal, ExactStatus::infeasible}) {
    CHECK(exact_status_from_string(to_string(status)) == status);
  }
  CHECK(to_string(ExactStatus::optimal) == "optimal");
  CHECK(to_string(ExactStatus::infeasible) == "infeasible");
  CHECK_THROWS_AS(exact_status_from_string("solved"), InputError);
}

TEST_CASE("mass units outside their range are rejected naming the field") {
  ExactOptions options;
  CHECK_NOTHROW(options.validate());
  for (double bad : {10.0, 1e16, std::nan("")}) {
    options.mass_units = bad;
    try {
      options.validate();
      FAIL("mass_units = " << bad << " was accepted");
    } catch (const InputError& error) {
      CHECK(error.where() == "mass_units");
    }
  }
}

TEST_CASE("the brief names the status, the gain and the links") {
  TransportProblem p;
  p.gains = Matrix::Identity(2, 2);
  p.budgets = Vector::Constant(2, 0.5);
  p.capacities = Vector::Constant(2, 0.5);
  const auto result = solve_exact(p);
  const std::string line = result.brief();
  CHECK(line.rfind("exact: optimal, total gain 1, 2 links (forest), ", 0) == 0);
  CHECK(line.find(" ms") != std::string::npos);

  p.access = AccessMask::Zero(2, 2);
  p.access->col(0).setOnes();
  const auto failed = solve_exact(p);
  CHECK(failed.brief().rfind("exact: infeasible: partner 2 may be used by no agent", 0) == 0);
}

TEST_CASE("whole-number budgets and capacities give a whole-number coupling with exact marginals") {
  // Total unimodularity of the transportation polytope (common practice): a
  // basic optimum of an integer-margin problem is integral.
  std::mt19937_64 rng(97);
  std::uniform_int_distribution<int> count(1, 40);
  std::uniform_real_distribution<double> gain(0.0, 1.0);
  for (int trial = 0; trial < 10; ++trial) {
    TransportProblem p;
    p.gains = Matrix::NullaryExpr(12, 9, [&] { return gain(rng); });
    p.budgets = Vector::NullaryExpr(12, [&] { return static_cast<double>(count(rng)); });
    p.capacities = Vector::NullaryExpr(9, [&] { return static_cast<double>(count(rng)); });
    // Balance by topping up the smaller side's last entry.
    const double gap = p.budgets.sum() - p.capacities.sum();
    (gap > 0 ? p.capacities[8] : p.budgets[11]) += std::abs(gap);
    const ExactResult result = solve_exact(p);
    REQUIRE(result.optimal());
    INFO("trial " << trial);
    CHECK((result.coupling.array() - result.coupling.array().round()).abs().maxCoeff() == 0.0);
    CHECK((result.coupling.rowwise().sum() - p.budgets).cwiseAbs().maxCoeff() == 0.0);
    CHECK((result.coupling.colwise().sum().transpose() - p.capacities).cwiseAbs().maxCoeff() ==
          0.0);
  }
}
