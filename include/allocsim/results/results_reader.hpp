// Reading a results file (layout.hpp, DESIGN.md section 7): its runs, their
// attributes, scenario, labels, allocations and analysis, and the summary.
// Shared by every command that reads results (analyze, plot, inspect, trend,
// run's merge). No HDF5 type appears in this interface.
#pragma once

#include <memory>
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

// The attribute as a number (integers and numeric text convert), or nothing.
std::optional<double> attribute_number(const Attributes& attributes, const std::string& name);
// The attribute as text (numbers formatted), or "" when absent.
std::string attribute_text(const Attributes& attributes, const std::string& name);

// A dataset as `inspect` lists it: path relative to the run, element type
// ("float64", "int64", "uint8", "text", ...) and shape.
struct DatasetInfo {
  std::string path, type;
  std::vector<unsigned long long> shape;
};

class ResultsReader {
 public:
  // Opens for reading. Throws InputError naming `path` when it is missing,
  // not HDF5, not an allocsim results file, or of a newer format version
  // than this build reads.
  explicit ResultsReader(const std::string& path);
  ~ResultsReader();
  ResultsReader(ResultsReader&&) noexcept;

  const std::string& path() const { return path_; }
  Attributes root_attributes() const;

  // Names under /runs, sorted.
  std::vector<std::string> runs() const;
  // Throws InputError naming the file and the runs it holds when absent.
  void require_run(const std::string& run) const;
  Attributes run_attributes(const std::string& run) const;
  // Attributes of a group inside the run, e.g. layout::kAnalysis; empty when absent.
  Attributes group_attributes(const std::string& run, const std::string& path) const;
  // Every dataset of the run, depth first, sorted by path.
  std::vector<DatasetInfo> datasets(const std::string& run) const;

  // Paths are relative to /runs/<run>, e.g. layout::kTotal.
  bool has(const std::string& run, const std::string& path) const;
  Matrix read_matrix(const std::string& run, const std::string& path) const;
  Vector read_vector(const std::string& run, const std::string& path) const;
  // A text dataset (e.g. layout::kAgentLabels); empty when absent.
  std::vector<std::string> read_texts(const std::string& run, const std::string& path) const;
  // Snapshot k of allocation/snapshots (k x n x m), one at a time.
  long snapshot_count(const std::string& run) const;
  Matrix read_snapshot(const std::string& run, long k) const;
  // Gains, budgets, capacities and access of the run.
  TransportProblem read_scenario(const std::string& run) const;

  // The /summary columns as datasets (name, type, shape); empty without a summary.
  std::vector<DatasetInfo> summary_columns() const;
  // /summary columns: numeric ones and text ones.
  std::vector<std::pair<std::string, std::vector<double>>> summary_numbers() const;
  std::vector<std::pair<std::string, std::vector<std::string>>> summary_texts() const;

 private:
  struct File;
  std::string path_;
  std::unique_ptr<File> file_;
};

}  // namespace allocsim
