// Reading a results file (the HDF5 layout of DESIGN.md section 7): its runs,
// their attributes, scenario, allocations and analysis. Shared by every
// command that reads results (analyze, plot, inspect, run's merge).
#pragma once

#include <H5Cpp.h>

#include <optional>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

using AttributeValue = std::variant<std::string, long long, double>;
using Attributes = std::vector<std::pair<std::string, AttributeValue>>;

// All attributes of an HDF5 object, in storage order.
Attributes read_attributes(const H5::H5Object& object);
// The attribute as a number (integers and numeric text convert), or nothing.
std::optional<double> attribute_number(const Attributes& attributes, const std::string& name);
// The attribute as text (numbers formatted), or "" when absent.
std::string attribute_text(const Attributes& attributes, const std::string& name);

class ResultsReader {
 public:
  // Opens for reading. Throws InputError naming `path` when it is missing,
  // not HDF5, or not an allocsim results file.
  explicit ResultsReader(const std::string& path);

  const std::string& path() const { return path_; }
  H5::H5File& file() { return file_; }
  Attributes root_attributes() const;

  // Names under /runs, sorted.
  std::vector<std::string> runs() const;
  // Throws InputError naming the file and the runs it holds when absent.
  void require_run(const std::string& run) const;
  Attributes run_attributes(const std::string& run) const;
  // Attributes of a group inside the run, e.g. "analysis"; empty when absent.
  Attributes group_attributes(const std::string& run, const std::string& path) const;

  // Paths are relative to /runs/<run>, e.g. "allocation/total".
  bool has(const std::string& run, const std::string& path) const;
  Matrix read_matrix(const std::string& run, const std::string& path) const;
  Vector read_vector(const std::string& run, const std::string& path) const;
  // Snapshot k of allocation/snapshots (k x n x m), one at a time.
  long snapshot_count(const std::string& run) const;
  Matrix read_snapshot(const std::string& run, long k) const;
  // Gains, budgets, capacities and access of the run.
  TransportProblem read_scenario(const std::string& run) const;

  // /summary columns: numeric ones and text ones.
  std::vector<std::pair<std::string, std::vector<double>>> summary_numbers() const;
  std::vector<std::pair<std::string, std::vector<std::string>>> summary_texts() const;

 private:
  H5::DataSet open_dataset(const std::string& run, const std::string& path) const;
  std::string path_;
  H5::H5File file_;
};

}  // namespace allocsim
