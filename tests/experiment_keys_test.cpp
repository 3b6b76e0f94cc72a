#include <catch2/catch.hpp>
#include <fstream>
#include <set>

#include "allocsim/core/error.hpp"
#include "allocsim/experiments/analysis_settings.hpp"
#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"
#include "test_files.hpp"

using namespace allocsim;

namespace {

std::string write_ini(const std::string& name, const std::string& text) {
  return testing::write_test_file("experiment_keys_test_" + name + ".ini", text);
}

}  // namespace

TEST_CASE("every key is declared once, with a section and a valid default") {
  std::set<std::string> names;
  ExperimentValues defaults;  // checks nothing; set() below checks the defaults
  for (const auto& key : experiment_keys()) {
    CHECK(names.insert(key.name).second);
    CHECK(key.name.find('.') != std::string::npos);
    if (!key.default_value.empty()) CHECK_NOTHROW(defaults.set(key.name, key.default_value, ""));
  }
}

TEST_CASE("a file's values are read and the command line wins") {
  const std::string path = write_ini("basic",
                                     "# a comment\n[scenario]\nagents = 7\n\n[dynamics]\n"
                                     "rule = queue\ntemperature = 0.25\n");
  const ExperimentValues values = experiment_values(path, {{"dynamics.temperature", "0.5"}});
  CHECK(values.integer("scenario.agents") == 7);
  CHECK(values.text("dynamics.rule") == "queue");
  CHECK(values.real("dynamics.temperature") == 0.5);
  CHECK(values.where("scenario.agents") == path + ":3");
  CHECK(values.where("dynamics.temperature") == "--dynamics.temperature");
  CHECK_FALSE(values.given("scenario.partners"));
}

TEST_CASE("an unknown key names the file, the line and the nearest valid key") {
  const std::string path = write_ini("unknown", "[dynamics]\nrule = price\ntemprature = 1\n");
  CHECK_THROWS_WITH(experiment_values(path, {}),
                    Catch::StartsWith(path + ":3: dynamics.temprature") &&
                        Catch::Contains("did you mean dynamics.temperature"));
  CHECK(nearest_experiment_key("units") == "dynamics.units");
  CHECK(nearest_experiment_key("scenario.agnets") == "scenario.agents");
}

TEST_CASE("bad values name where they were given and what is valid") {
  const std::string path = write_ini("bad", "[dynamics]\ntemperature = 0\n");
  CHECK_THROWS_WITH(experiment_values(path, {}),
                    Catch::StartsWith(path + ":2: dynamics.temperature") && Catch::Contains("> 0"));
  CHECK_THROWS_WITH(
      experiment_values("", {{"dynamics.rule", "auction"}}),
      Catch::StartsWith("--dynamics.rule") && Catch::Contains("price|gumbel|queue|learn"));
  CHECK_THROWS_WITH(experiment_values("", {{"dynamics.rounds", "2.5"}}),
                    Catch::Contains("whole number"));
  CHECK_THROWS_WITH(experiment_values("", {{"scenario.agents", "many"}}),
                    Catch::Contains("not a number"));
}

TEST_CASE("a malformed line, a repeated key and a missing file are errors with places") {
  const std::string malformed = write_ini("malformed", "[dynamics]\nrule price\n");
  CHECK_THROWS_WITH(experiment_values(malformed, {}), Catch::StartsWith(malformed + ":2"));
  const std::string twice = write_ini("twice", "[dynamics]\nrule = price\nrule = queue\n");
  CHECK_THROWS_WITH(experiment_values(twice, {}),
                    Catch::StartsWith(twice + ":3: dynamics.rule") && Catch::Contains("twice"));
  CHECK_THROWS_WITH(experiment_values("no_such_file.ini", {}),
                    Catch::StartsWith("no_such_file.ini"));
}

TEST_CASE("keys valid alone but not together name the later key") {
  const std::string path = write_ini("together", "[dynamics]\nrounds = 10\nburn_in = 10\n");
  CHECK_THROWS_WITH(simulation_settings(experiment_values(path, {})),
                    Catch::StartsWith(path + ":3: dynamics.burn_in"));
}

TEST_CASE("a lower layer's field is named by its key, where it was given") {
  // sim/ says "mean_field"; the experiment layer says which key and where.
  CHECK_THROWS_WITH(
      simulation_settings(
          experiment_values("", {{"dynamics.rule", "queue"}, {"dynamics.mean_field", "true"}})),
      Catch::StartsWith("--dynamics.mean_field: applies to the price and gumbel rules only"));
  const std::string path =
      write_ini("threshold", "[analysis]\nbinarize = row-share\nthreshold = 2\n");
  CHECK_THROWS_WITH(analysis_options(experiment_values(path, {}), 0),
                    Catch::StartsWith(path + ":3: analysis.threshold: must be in (0, 1]"));
}

TEST_CASE("the experiment text reads back to the same values") {
  const ExperimentValues values =
      experiment_values("", {{"scenario.agents", "11"}, {"dynamics.rule", "learn"}});
  const std::string path = write_ini("roundtrip", values.to_ini());
  const ExperimentValues again = experiment_values(path, {});
  for (const auto& key : experiment_keys()) {
    CHECK(again.text(key.name) == values.text(key.name));
    CHECK(again.given(key.name) == values.given(key.name));
  }
}

TEST_CASE("gains from a file take their shape from it unless agents or partners are given") {
  std::ofstream("experiment_keys_test_gains.csv") << "1,2,3\n4,5,6\n";
  const auto settings = simulation_settings(experiment_values(
      "", {{"scenario.gains", "file"}, {"scenario.gains_file", "experiment_keys_test_gains.csv"}}));
  CHECK(settings.scenario.agents == 0);
  CHECK(settings.scenario.partners == 0);
}
