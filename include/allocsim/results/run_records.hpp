// The values of every run of a results file as one table, for figures and
// trends: each run's attributes (its parameters, seed, status, ...), its
// analysis attributes, and its row of /summary, under their layout names
// (layout.hpp) and experiment key names ("dynamics.temperature"). A run's
// own attribute wins over an analysis attribute of the same name, which
// wins over the summary.
#pragma once

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "allocsim/results/results_reader.hpp"

namespace allocsim {

struct RunRecord {
  std::string name;
  std::map<std::string, double> numbers;
  std::map<std::string, std::string> texts;

  std::optional<double> number(const std::string& key) const;
  std::optional<std::string> text(const std::string& key) const;
};

// One record per run, in the order of reader.runs().
std::vector<RunRecord> read_run_records(const ResultsReader& reader);

}  // namespace allocsim
