// Running an experiment file: every point of its sweep, on a pool of
// threads (and, when built with MPI, over ranks), each finished run kept at
// once (run_store.hpp), so an interrupted sweep resumes where it stopped.
//
// Runs are numbered in sweep order (sweep.hpp); run k is seeded by
// (scenario.seed, k, stream) whatever thread or rank plays it, so a sweep's
// results do not depend on how it was spread.
#pragma once

#include <atomic>
#include <functional>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/sweep.hpp"
#include "allocsim/results/results_file.hpp"

namespace allocsim {

// Changes to the file's [sweep] from the command line: --sweep.KEY VALUES
// replaces (or adds) an axis, --replicates N the replicate count.
struct SweepOverrides {
  std::vector<std::pair<std::string, std::string>> axes;  // (key, specification)
  long replicates = 0;                                    // 0: as the file says
};

// The experiment, checked in full before any run starts.
//
// Its identity is the effective experiment: every key after defaults, file
// and command line (numbers normalised, so "1e3" equals "1000"), the
// expanded axes, combine and replicates, and the content of every data file
// the runs read. A resume or a rerun over a finished file is accepted only
// for the same identity; comments, spacing and key order do not matter.
struct SweepPlan {
  std::string
      experiment_text;    // the file as given, then the command-line values (stored in the results)
  ExperimentValues base;  // the values without the sweep
  SweepSection sweep;
  std::vector<SweepPoint> points;  // run k = points[k]
  std::vector<std::string> swept_keys;
  std::string output_file;  // as given (messages)
  std::string identity;     // the effective experiment, one "key = value" per line
  // Files the runs read, (label, path): the experiment and every data file.
  std::vector<std::pair<std::string, std::string>> inputs;

  // The values of run k: the base with that point's axis values applied.
  ExperimentValues run_values(long k) const;
};

// Reads and checks the experiment, with command-line values (key, text)
// applied over the file's and the sweep overrides applied to its [sweep]:
// every point's settings, every data file (read and checked like a run would,
// the message naming the INI line of its key), the output (a regular file or
// none, not one of the inputs). Throws InputError naming file, line and key;
// a command-line value of a swept key is an error that points to --sweep.KEY.
SweepPlan plan_sweep(const std::string& path,
                     const std::vector<std::pair<std::string, std::string>>& command_line,
                     const SweepOverrides& overrides = {});

// Refuses (InputError naming the largest point's key) a sweep whose runs in
// flight on `threads` threads cannot fit in memory; the estimate is in the
// message.
void require_sweep_memory(const SweepPlan& plan, int threads);

// Hands out run numbers to workers; one per process (threads share it).
class RunDistributor {
 public:
  virtual ~RunDistributor() = default;
  // The next position in the to-do list, or -1 when none is left.
  virtual long next() = 0;
};

// Positions 0, 1, 2, ... up to `count`, across the threads of one process.
std::unique_ptr<RunDistributor> local_distributor(long count);

struct SweepProgress {
  long done = 0;          // runs finished in this invocation
  long to_do = 0;         // runs this invocation set out to do
  long already_done = 0;  // runs kept from an earlier invocation (to_do + already_done = all)
  double seconds = 0;     // since the start
};

struct SweepRequest {
  int threads = 1;  // worker threads in this process; >= 1
  // Discard an unfinished sweep or a finished file of another experiment (only
  // files allocsim wrote: a results file by its format attribute, run parts).
  bool restart = false;
  std::string tool_version;
  std::function<void(const SweepProgress&)> progress;  // called after each run (serialised)
  const std::atomic<bool>* stop = nullptr;             // set to stop taking new runs
  // Spreads the to-do list; default: local_distributor. With MPI, every rank
  // passes the same to-do list (computed by rank 0) and a shared distributor.
  std::function<std::unique_ptr<RunDistributor>(long count)> make_distributor;
  std::function<std::vector<long>(std::vector<long>)> share_to_do;  // identity without MPI
  std::function<void()> barrier;                                    // no-op without MPI
  bool merge_here = true;  // false on MPI ranks other than 0
};

struct SweepReport {
  std::string output_file;
  long total = 0;                     // runs in the sweep
  long already_done = 0;              // found finished from an earlier invocation
  long ran = 0;                       // finished now (by this process)
  std::vector<std::string> failures;  // "run-000012: message"
  bool interrupted = false;
  bool complete = false;    // the results file was written (or is already there)
  bool left_alone = false;  // a finished file of the same experiment was already there
  double seconds = 0;
  SummaryTable summary;  // when complete

  std::string brief() const;
};

SweepReport run_sweep(const SweepPlan& plan, const SweepRequest& request);

// The summary table as CSV (one row per run), written atomically.
void write_summary_csv(const std::string& path, const SummaryTable& table);

}  // namespace allocsim
