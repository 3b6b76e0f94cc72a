// An experiment's settings, typed: the scenario, the dynamics and the output
// file, read from the checked key values (keys.hpp).
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "allocsim/experiments/keys.hpp"
#include "allocsim/sim/rules.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {

struct SimulationSettings {
  ScenarioOptions scenario;
  DynamicsOptions dynamics;
  std::string output_file;
};

// Typed settings. With scenario.gains = file and neither scenario.agents nor
// scenario.partners given, the shape is taken from the gains file. Throws
// InputError naming the key (and where it was given) for values that are
// valid alone but not together (e.g. burn_in >= rounds).
SimulationSettings simulation_settings(const ExperimentValues& values);

// Reads --config (when not empty), then applies the command-line values,
// which win over the file.
ExperimentValues experiment_values(
    const std::string& config_path,
    const std::vector<std::pair<std::string, std::string>>& command_line);

}  // namespace allocsim
