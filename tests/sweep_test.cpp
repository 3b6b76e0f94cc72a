#include "allocsim/experiments/sweep.hpp"

#include <catch2/catch.hpp>

#include "allocsim/core/error.hpp"

using namespace allocsim;
using Values = std::vector<std::string>;

TEST_CASE("lists, ranges and spacings expand to their values") {
  CHECK(expand_sweep_values("0.1, 0.2,0.5", "x") == Values{"0.1", "0.2", "0.5"});
  CHECK(expand_sweep_values("price, gumbel", "x") == Values{"price", "gumbel"});
  CHECK(expand_sweep_values("3..6", "x") == Values{"3", "4", "5", "6"});
  CHECK(expand_sweep_values("2..0", "x") == Values{"2", "1", "0"});
  CHECK(expand_sweep_values("linear(0, 1, 11)", "x")[3] == "0.3");
  CHECK(expand_sweep_values("linear(0, 1, 11)", "x").size() == 11);
  // log(0.01, 1, 5): 10^-2, 10^-1.5, 10^-1, 10^-0.5, 10^0 (closed form)
  CHECK(expand_sweep_values("log(0.01, 1, 5)", "x") ==
        Values{"0.01", "0.0316227766017", "0.1", "0.316227766017", "1"});
  CHECK(expand_sweep_values("log(1, 1, 1)", "x") == Values{"1"});
}

TEST_CASE("malformed sweeps name where they were written") {
  CHECK_THROWS_WITH(expand_sweep_values("log(0, 1, 5)", "exp.ini:7"),
                    Catch::Contains("exp.ini:7") && Catch::Contains("> 0"));
  CHECK_THROWS_WITH(expand_sweep_values("linear(0, 1, 2.5)", "exp.ini:7"),
                    Catch::Contains("whole number"));
  CHECK_THROWS_WITH(expand_sweep_values("linear(0, one, 3)", "exp.ini:7"),
                    Catch::Contains("'one'"));
  CHECK_THROWS_WITH(expand_sweep_values("0.1,,0.2", "exp.ini:7"), Catch::Contains("empty item"));
  CHECK_THROWS_WITH(expand_sweep_values("1..x", "exp.ini:7"), Catch::Contains("not a sweep"));
  CHECK_THROWS_WITH(expand_sweep_values("geom(1,2,3)", "exp.ini:7"),
                    Catch::Contains("not a sweep"));
  CHECK_THROWS_AS(sweep_combine_from_string("cross", "exp.ini:9"), InputError);
}

TEST_CASE("a grid spans every combination, first axis slowest, replicates innermost") {
  const std::vector<SweepAxis> axes = {{"a.x", {"1", "2"}, ""}, {"a.y", {"p", "q", "r"}, ""}};
  const auto points = sweep_points(axes, SweepCombine::grid, 2);
  REQUIRE(points.size() == 12);
  CHECK(points[0].settings[0].second == "1");
  CHECK(points[0].settings[1].second == "p");
  CHECK(points[1].replicate == 1);
  CHECK(points[2].settings[1].second == "q");
  CHECK(points[11].settings[0].second == "2");
  CHECK(points[11].settings[1].second == "r");
}

TEST_CASE("zip pairs the k-th values and needs equal lengths") {
  std::vector<SweepAxis> axes = {{"a.x", {"1", "2"}, ""}, {"a.y", {"p", "q"}, "exp.ini:4"}};
  const auto points = sweep_points(axes, SweepCombine::zip, 1);
  REQUIRE(points.size() == 2);
  CHECK(points[1].settings[1].second == "q");
  axes[1].values.push_back("r");
  CHECK_THROWS_WITH(sweep_points(axes, SweepCombine::zip, 1),
                    Catch::Contains("exp.ini:4") && Catch::Contains("equal length"));
}

TEST_CASE("no axes gives one run per replicate") {
  CHECK(sweep_points({}, SweepCombine::grid, 4).size() == 4);
}
