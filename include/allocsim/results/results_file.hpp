// A results file (HDF5) in the layout of DESIGN.md section 7, written so
// that it appears complete or not at all: everything goes to a temporary
// name beside the target ("<file>.tmp-<pid>") and is renamed onto the target
// by commit(). A run killed at any point (even by SIGKILL) leaves no file
// under the final name; destroying the object without commit() removes the
// temporary file.
//
// Root attributes: format = "allocsim-results", format_version (integer),
// tool_version, created_utc (ISO 8601), experiment (the experiment as INI
// text). Runs go under /runs/<run>; the summary table under /summary, one
// 1-D dataset per column and one row per run.
#pragma once

#include <H5Cpp.h>

#include <string>
#include <utility>
#include <vector>

namespace allocsim {

constexpr const char* kResultsFormat = "allocsim-results";
constexpr long long kResultsFormatVersion = 1;

// One row per run; numeric and text columns in insertion order.
struct SummaryTable {
  std::vector<std::pair<std::string, std::vector<double>>> numbers;
  std::vector<std::pair<std::string, std::vector<std::string>>> texts;
};

class ResultsFile {
 public:
  // Throws InputError naming `path` when its folder cannot be written.
  ResultsFile(std::string path, const std::string& experiment_text, const std::string& tool_version);
  ~ResultsFile();
  ResultsFile(const ResultsFile&) = delete;
  ResultsFile& operator=(const ResultsFile&) = delete;

  // Creates /runs/<name>.
  H5::Group create_run(const std::string& name);
  void write_summary(const SummaryTable& table);
  // Closes the file and renames it onto the target.
  void commit();

  const std::string& temporary_path() const { return temporary_; }
  // The open file, for writers that need more than create_run (e.g. copying runs in).
  H5::H5File& file() { return file_; }

 private:
  std::string path_, temporary_;
  H5::H5File file_;
  bool committed_ = false;
};

// Name of run number `index`: "run-000000", "run-000001", ...
std::string run_name(long index);

// Current UTC time as "2024-05-01T12:00:00Z".
std::string utc_timestamp();

}  // namespace allocsim
