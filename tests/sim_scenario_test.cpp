#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>

#include "allocsim/core/error.hpp"
#include "allocsim/sim/scenario.hpp"
#include "test_files.hpp"

using namespace allocsim;

namespace {

std::string write_file(const std::string& name, const std::string& text) {
  return testing::write_test_file("sim_scenario_test_" + name + ".csv", text);
}

}  // namespace

TEST_CASE("rank-product gains are the product of scaled ranks") {
  ScenarioOptions o;
  o.agents = 4;
  o.partners = 5;
  o.gains = GainsKind::rank_product;
  o.gains_scale = 2.0;
  const TransportProblem p = make_scenario(o);
  // Closed form: 2 * (i+1)/4 * (j+1)/5.
  CHECK(p.gains(3, 4) == Approx(2.0));
  CHECK(p.gains(1, 2) == Approx(2.0 * 0.5 * 0.6));
}

TEST_CASE("budgets and capacities total 1 each and zipf follows its power law") {
  ScenarioOptions o;
  o.budgets = MassKind::zipf;
  o.budgets_exponent = 1.5;
  o.capacities = MassKind::lognormal;
  const TransportProblem p = make_scenario(o);
  CHECK(p.budgets.sum() == Approx(1.0));
  CHECK(p.capacities.sum() == Approx(1.0));
  // Closed form: r_k / r_1 = k^-1.5.
  CHECK(p.budgets[3] / p.budgets[0] == Approx(std::pow(4.0, -1.5)));
  CHECK((p.capacities.array() > 0).all());
}

TEST_CASE("trait-distance gains are minus a distance to the power p") {
  ScenarioOptions o;
  o.gains_exponent = 1.0;
  const TransportProblem p = make_scenario(o);
  CHECK(p.gains.maxCoeff() <= 0);
  CHECK(p.gains.minCoeff() >= -1);
}

TEST_CASE("threshold access is nested and every agent and partner keeps a pair") {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    ScenarioOptions o;
    o.access = AccessKind::threshold;
    o.capacities = MassKind::zipf;
    o.seed = seed;
    const TransportProblem p = make_scenario(o);
    const AccessMask& a = *p.access;
    // Nested: of any two rows, one's allowed set contains the other's.
    for (long i = 0; i < a.rows(); ++i) {
      REQUIRE(a.row(i).cast<int>().sum() > 0);
      for (long k = 0; k < a.rows(); ++k) {
        const bool i_in_k = ((a.row(i).cast<int>() - a.row(k).cast<int>()).array() <= 0).all();
        const bool k_in_i = ((a.row(k).cast<int>() - a.row(i).cast<int>()).array() <= 0).all();
        REQUIRE((i_in_k || k_in_i));
      }
    }
    for (long j = 0; j < a.cols(); ++j) REQUIRE(a.col(j).cast<int>().sum() > 0);
  }
}

TEST_CASE("random access has about the asked density") {
  ScenarioOptions o;
  o.agents = 100;
  o.partners = 100;
  o.access = AccessKind::random;
  o.access_density = 0.3;
  const TransportProblem p = make_scenario(o);
  // Binomial(10000, 0.3) has sd 46: 5 sd is 0.023 in density (repairs add few cells).
  CHECK(std::abs(p.access->cast<double>().mean() - 0.3) < 0.023);
}

TEST_CASE("the same seed gives the same scenario and run changes it") {
  ScenarioOptions o;
  o.gains = GainsKind::features;
  o.budgets = MassKind::lognormal;
  CHECK(make_scenario(o, 0).gains == make_scenario(o, 0).gains);
  CHECK(make_scenario(o, 0).gains != make_scenario(o, 1).gains);
  CHECK(make_scenario(o, 0).budgets != make_scenario(o, 1).budgets);
}

TEST_CASE("a gains file must match agents x partners") {
  ScenarioOptions o;
  o.gains = GainsKind::file;
  o.gains_file = write_file("gains", "1,2,3\n4,5,6\n");
  o.agents = 3;
  o.partners = 3;
  CHECK_THROWS_WITH(make_scenario(o), Catch::Contains("is 2x3") && Catch::Contains("3x3"));
  o.agents = 0;  // from the file
  o.partners = 0;
  const TransportProblem p = make_scenario(o);
  CHECK(p.agents() == 2);
  CHECK(p.partners() == 3);
}

TEST_CASE("a zero budget or an agent without partners is refused") {
  ScenarioOptions o;
  o.gains = GainsKind::file;
  o.gains_file = write_file("gains2", "1,2\n3,4\n");
  o.agents = o.partners = 0;
  o.budgets = MassKind::file;
  o.budgets_file = write_file("budgets", "1\n0\n");
  CHECK_THROWS_AS(make_scenario(o), InputError);
  o.budgets = MassKind::uniform;
  o.access = AccessKind::file;
  o.access_file = write_file("access", "1,1\n0,0\n");
  CHECK_THROWS_WITH(make_scenario(o), Catch::Contains("agent 2 has no accessible partner"));
}

TEST_CASE("kind names read back") {
  for (const auto kind : {GainsKind::rank_product, GainsKind::trait_distance, GainsKind::random,
                          GainsKind::features, GainsKind::file}) {
    CHECK(gains_kind_from_string(to_string(kind)) == kind);
  }
  CHECK_THROWS_WITH(access_kind_from_string("nested"),
                    "access: 'nested' is not one of full, threshold, random or file");
}
