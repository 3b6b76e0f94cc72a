// Writing a results file (layout.hpp, DESIGN.md section 7) so that it
// appears complete or not at all: everything goes to a temporary name beside
// the target ("<file>.tmp-<pid>") and is renamed onto the target by commit().
// A run killed at any point (even by SIGKILL) leaves no file under the final
// name; destroying the object without commit() removes the temporary file.
// A write that fails (a full disk, an I/O error) is a WriteError naming the
// target and the cause; the file is then abandoned, never flushed again.
//
// Root attributes: format, format_version, tool_version, created_utc (ISO
// 8601), experiment (the experiment as INI text). Runs go under /runs/<run>
// (RunWriter); the summary table under /summary, one 1-D dataset per column
// and one row per run. No HDF5 type appears in this interface.
#pragma once

#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"
#include "allocsim/sim/engine.hpp"

namespace allocsim {

// One row per run; numeric and text columns in insertion order.
struct SummaryTable {
  std::vector<std::pair<std::string, std::vector<double>>> numbers;
  std::vector<std::pair<std::string, std::vector<std::string>>> texts;
};

class AllocationRecorder;

// One run group of a results file being written: /runs/<run>. Cheap to copy
// (it refers to the group); valid while its ResultsFile is open.
class RunWriter {
 public:
  struct Group;
  explicit RunWriter(std::shared_ptr<Group> group);

  // Attributes of the run group (replaced when present).
  void set_text(const std::string& name, const std::string& value);
  void set_number(const std::string& name, double value);
  void set_integer(const std::string& name, long long value);

  // <run>/scenario: gains, budgets, capacities, access when not full.
  void write_scenario(const TransportProblem& problem);
  // <run>/labels/agents and /partners (either may be empty: not written).
  void write_labels(const std::vector<std::string>& agents,
                    const std::vector<std::string>& partners);
  // A numeric matrix at a path of layout.hpp, e.g. layout::kTotal (parents created).
  void write_matrix(const std::string& path, const Matrix& values);
  // A numeric vector (1-D dataset) at a path of layout.hpp (parents created).
  void write_vector(const std::string& path, const Vector& values);
  // Replaces <run>/analysis with the report: scalar metrics as attributes
  // (these become /summary columns in a sweep), the exact and entropic
  // couplings and the display order as datasets.
  void write_report(const AllocationReport& report);
  // <run>/analysis/reconstruction (layout.hpp): labels, the model table, the
  // latent scores and strengths, the feature weights and the fitted
  // couplings (input shape of `observed`), and as attributes of the analysis
  // group the latent rank, sigma_1 and, when the report carries them, the
  // recovery measures (/summary columns of a sweep). Call after
  // write_report, which replaces the analysis group.
  void write_gains_reconstruction(const GainsReconstructionReport& report,
                                  const ObservedAllocation& observed);
  // An empty <run>/analysis group (a run not analysed yet); replaces any.
  void clear_analysis();
  // Creates <run>/allocation with empty, extendable snapshots and round_end;
  // the recorder streams the snapshots (and prices) into it.
  AllocationRecorder record_allocation(long agents, long partners);

 private:
  std::shared_ptr<Group> group_;
};

// Streams one run's allocation into its group, in the layout of layout.hpp:
//   allocation/snapshots (k x n x m, float64 counts per window; chunked one
//   snapshot at a time, deflate-compressed, first axis unlimited), round_end
//   (k, int64: last round of each window, from 1), total (n x m, counts of
//   the rounds after burn-in); prices (k x m) for rules with prices.
// Only the current snapshot is held in memory: O(n*m) whatever the rounds.
class AllocationRecorder : public SnapshotSink {
 public:
  struct State;
  explicit AllocationRecorder(std::unique_ptr<State> state);
  ~AllocationRecorder() override;
  AllocationRecorder(AllocationRecorder&&) noexcept;

  void add_snapshot(const Matrix& counts, long round_end, const Vector* prices) override;
  // Writes allocation/total and closes the streamed datasets (a write that
  // fails, e.g. on a full disk, is a WriteError here).
  void finish(const RunResult& result);

 private:
  std::unique_ptr<State> state_;
};

// The target follows the rules of core/output_file.hpp: a symlink is
// followed (its target is written, the link stays); anything but a regular
// file or nothing is refused (InputError).
class ResultsFile {
 public:
  // Throws InputError naming `path` when its folder does not exist or cannot
  // be written, WriteError when the disk is full.
  ResultsFile(std::string path, const std::string& experiment_text,
              const std::string& tool_version);
  ~ResultsFile();
  ResultsFile(const ResultsFile&) = delete;
  ResultsFile& operator=(const ResultsFile&) = delete;

  // Creates /runs/<name>.
  RunWriter create_run(const std::string& name);
  // A run created earlier in this file.
  RunWriter run(const std::string& name);
  // Copies /runs/<run> of another results file (e.g. a sweep's part) in.
  void copy_run_from(const std::string& other_path, const std::string& run);
  void write_summary(const SummaryTable& table);
  // Closes the file and renames it onto the target.
  void commit();

  const std::string& path() const { return path_; }
  const std::string& temporary_path() const { return temporary_; }

 private:
  struct File;
  std::string path_, target_, temporary_;
  std::unique_ptr<File> file_;
  bool committed_ = false;
};

// Opens an existing results file for adding analyses: the changes go to a
// copy beside it that replaces the file only on commit(). A copy or write
// that fails is a WriteError (the file is left as it was).
class ResultsUpdate {
 public:
  explicit ResultsUpdate(std::string path);
  ~ResultsUpdate();
  ResultsUpdate(const ResultsUpdate&) = delete;
  ResultsUpdate& operator=(const ResultsUpdate&) = delete;

  RunWriter run(const std::string& name);
  void commit();

 private:
  struct File;
  std::string path_, target_, temporary_;
  std::unique_ptr<File> file_;
  bool committed_ = false;
};

// Name of run number `index`: "run-000000", "run-000001", ...
std::string run_name(long index);

// Current UTC time as "2024-05-01T12:00:00Z".
std::string utc_timestamp();

// Turns off the HDF5 library's own diagnostics on stderr (errors reach the
// user as one message of ours instead) and its end-of-process cleanup (a
// file abandoned after a failed write is never flushed). Idempotent; the
// command line calls it before anything else.
void silence_hdf5_diagnostics();

}  // namespace allocsim
