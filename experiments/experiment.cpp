#include "allocsim/experiments/experiment.hpp"

#include "allocsim/experiments/analysis_settings.hpp"

#include "allocsim/core/error.hpp"
#include "key_errors.hpp"

namespace allocsim {
namespace {

ScenarioOptions scenario_options(const ExperimentValues& v) {
  ScenarioOptions o;
  o.agents = static_cast<long>(v.integer("scenario.agents"));
  o.partners = static_cast<long>(v.integer("scenario.partners"));
  o.gains = gains_kind_from_string(v.text("scenario.gains"));
  o.gains_scale = v.real("scenario.gains_scale");
  o.gains_exponent = v.real("scenario.gains_exponent");
  o.gains_rank = static_cast<long>(v.integer("scenario.gains_rank"));
  o.gains_file = v.text("scenario.gains_file");
  o.budgets = mass_kind_from_string(v.text("scenario.budgets"), "budgets");
  o.budgets_exponent = v.real("scenario.budgets_exponent");
  o.budgets_spread = v.real("scenario.budgets_spread");
  o.budgets_file = v.text("scenario.budgets_file");
  o.capacities = mass_kind_from_string(v.text("scenario.capacities"), "capacities");
  o.capacities_exponent = v.real("scenario.capacities_exponent");
  o.capacities_spread = v.real("scenario.capacities_spread");
  o.capacities_file = v.text("scenario.capacities_file");
  o.access = access_kind_from_string(v.text("scenario.access"));
  o.access_density = v.real("scenario.access_density");
  o.access_file = v.text("scenario.access_file");
  o.seed = static_cast<std::uint64_t>(v.integer("scenario.seed"));
  if (o.gains == GainsKind::file && !v.given("scenario.agents") && !v.given("scenario.partners")) {
    o.agents = 0;  // taken from the file
    o.partners = 0;
  }
  return o;
}

DynamicsOptions dynamics_options(const ExperimentValues& v) {
  DynamicsOptions o;
  o.rule = rule_kind_from_string(v.text("dynamics.rule"));
  o.temperature = v.real("dynamics.temperature");
  o.rounds = static_cast<long>(v.integer("dynamics.rounds"));
  o.units = static_cast<long>(v.integer("dynamics.units"));
  o.burn_in = static_cast<long>(v.integer("dynamics.burn_in"));
  o.window = static_cast<long>(v.integer("dynamics.window"));
  o.price_step = v.real("dynamics.price_step");
  o.mean_field = v.boolean("dynamics.mean_field");
  o.learning_step = v.real("dynamics.learning_step");
  o.reward_noise = v.real("dynamics.reward_noise");
  return o;
}

}  // namespace

SimulationSettings simulation_settings(const ExperimentValues& values) {
  SimulationSettings settings;
  detail::check_as_keys(values, "scenario", [&] {
    settings.scenario = scenario_options(values);
    settings.scenario.validate();
  });
  detail::check_as_keys(values, "dynamics", [&] {
    settings.dynamics = dynamics_options(values);
    settings.dynamics.validate();
    check_reconstruction_keys(values);
  });
  settings.output_file = values.text("output.file");
  return settings;
}

ExperimentValues experiment_values(
    const std::string& config_path,
    const std::vector<std::pair<std::string, std::string>>& command_line) {
  ExperimentValues values;
  if (!config_path.empty()) read_experiment_file(config_path, values);
  for (const auto& [key, text] : command_line) values.set(key, text, "--" + key);
  return values;
}

}  // namespace allocsim
