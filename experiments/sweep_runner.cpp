#include "allocsim/experiments/sweep_runner.hpp"

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <set>
#include <sstream>
#include <thread>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/results_reader.hpp"
#include "allocsim/results/run_store.hpp"
#include "allocsim/experiments/simulation.hpp"
#include "allocsim/results/layout.hpp"

namespace allocsim {
namespace {

using Clock = std::chrono::steady_clock;

std::string read_whole_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, "cannot be read (does the file exist?)");
  std::stringstream buffer;
  buffer << in.rdbuf();
  return buffer.str();
}

class CountingDistributor : public RunDistributor {
 public:
  explicit CountingDistributor(long count) : count_(count) {}
  long next() override {
    const long k = next_.fetch_add(1);
    return k < count_ ? k : -1;
  }

 private:
  long count_;
  std::atomic<long> next_{0};
};

// Plays run k into its own part file and commits it.
void play_run(const SweepPlan& plan, const RunStore& store, long k,
              const std::string& tool_version) {
  const ExperimentValues values = plan.run_values(k);
  const SimulationSettings settings = simulation_settings(values);
  ResultsFile part(store.part_path(k), plan.experiment_text, tool_version);
  const std::string run = run_name(k);
  record_run(part, run, static_cast<std::uint64_t>(k), values, settings, nullptr);
  part.run(run).set_integer(layout::kReplicate, plan.points[static_cast<std::size_t>(k)].replicate);
  part.commit();
}

std::vector<long> runs_to_do(const RunStore& store, long total) {
  const std::set<long> done = store.finished();
  std::vector<long> to_do;
  for (long k = 0; k < total; ++k)
    if (!done.count(k)) to_do.push_back(k);
  return to_do;
}

// A finished results file of a different experiment is not overwritten
// unless asked; the same experiment simply runs again.
void check_existing_results(const SweepPlan& plan, bool restart) {
  if (restart || !std::filesystem::exists(plan.output_file)) return;
  std::string existing;
  try {
    existing = attribute_text(ResultsReader(plan.output_file).root_attributes(), "experiment");
  } catch (const InputError&) {
    throw InputError(plan.output_file, "exists and is not an allocsim results file; remove it, "
                                       "choose another output.file, or pass --restart");
  }
  if (existing != plan.experiment_text) {
    throw InputError(plan.output_file, "holds the results of a different experiment; pass "
                                       "--restart to replace them, or choose another output.file");
  }
}

}  // namespace

ExperimentValues SweepPlan::run_values(long k) const {
  ExperimentValues values = base;
  for (const auto& [key, text] : points[static_cast<std::size_t>(k)].settings) {
    std::string where = "sweep";
    for (const auto& axis : sweep.axes)
      if (axis.key == key) where = axis.where;
    values.set(key, text, where);
  }
  return values;
}

SweepPlan plan_sweep(const std::string& path,
                     const std::vector<std::pair<std::string, std::string>>& command_line) {
  SweepPlan plan;
  plan.experiment_text = read_whole_file(path);
  read_experiment_file(path, plan.base, &plan.sweep);
  for (const auto& [key, text] : command_line) plan.base.set(key, text, "--" + key);
  plan.points = sweep_points(plan.sweep.axes, plan.sweep.combine, plan.sweep.replicates);
  for (const auto& axis : plan.sweep.axes) plan.swept_keys.push_back(axis.key);
  plan.output_file = plan.base.text("output.file");
  if (plan.output_file.empty()) throw InputError(path, "output.file is empty; name a results file");
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    simulation_settings(plan.run_values(k));  // throws for a bad combination
  }
  return plan;
}

std::unique_ptr<RunDistributor> local_distributor(long count) {
  return std::make_unique<CountingDistributor>(count);
}

std::string SweepReport::brief() const {
  std::ostringstream out;
  out.precision(3);
  if (complete) {
    out << "wrote " << output_file << ": " << total << " runs";
    if (already_done) out << " (" << already_done << " kept from an earlier start)";
    out << " in " << seconds << " s";
  } else if (interrupted) {
    out << "stopped: " << (already_done + ran) << " of " << total
        << " runs are kept; run the same command again to finish";
  } else if (!failures.empty()) {
    out << failures.size() << " of " << total << " runs failed (first: " << failures.front()
        << "); finished runs are kept, run the same command again after fixing it";
  } else {
    out << ran << " runs done by this process; another process writes " << output_file;
  }
  return out.str();
}

SweepReport run_sweep(const SweepPlan& plan, const SweepRequest& request) {
  const auto started = Clock::now();
  SweepReport report;
  report.output_file = plan.output_file;
  report.total = static_cast<long>(plan.points.size());
  RunStore store(plan.output_file);
  if (request.merge_here) {
    check_existing_results(plan, request.restart);
    store.open(plan.experiment_text, request.restart);
  }
  if (request.barrier) request.barrier();

  std::vector<long> to_do = runs_to_do(store, report.total);
  if (request.share_to_do) to_do = request.share_to_do(std::move(to_do));
  report.already_done = report.total - static_cast<long>(to_do.size());

  const auto distributor = request.make_distributor
                               ? request.make_distributor(static_cast<long>(to_do.size()))
                               : local_distributor(static_cast<long>(to_do.size()));
  std::mutex mutex;
  SweepProgress progress{0, static_cast<long>(to_do.size()), 0};
  const auto worker = [&] {
    while (!(request.stop && request.stop->load())) {
      const long position = distributor->next();
      if (position < 0) return;
      const long k = to_do[static_cast<std::size_t>(position)];
      std::string failure;
      try {
        play_run(plan, store, k, request.tool_version);
      } catch (const std::exception& e) {
        failure = run_name(k) + ": " + e.what();
      }
      std::lock_guard<std::mutex> lock(mutex);
      if (failure.empty()) {
        ++report.ran;
      } else {
        report.failures.push_back(failure);
      }
      ++progress.done;
      progress.seconds = std::chrono::duration<double>(Clock::now() - started).count();
      if (request.progress) request.progress(progress);
    }
  };
  std::vector<std::thread> pool;
  for (int t = 1; t < request.threads; ++t) pool.emplace_back(worker);
  worker();
  for (auto& thread : pool) thread.join();
  if (request.barrier) request.barrier();

  report.interrupted = request.stop && request.stop->load();
  const bool all_there = static_cast<long>(store.finished().size()) == report.total;
  if (request.merge_here && all_there) {
    report.summary = store.merge(report.total, plan.experiment_text, request.tool_version,
                                 plan.swept_keys);
    report.complete = true;
    report.interrupted = false;
  }
  report.seconds = std::chrono::duration<double>(Clock::now() - started).count();
  return report;
}

void write_summary_csv(const std::string& path, const SummaryTable& table) {
  std::vector<std::string> header;
  for (const auto& [name, column] : table.texts) header.push_back(name);
  for (const auto& [name, column] : table.numbers) header.push_back(name);
  const std::size_t rows = !table.texts.empty()     ? table.texts.front().second.size()
                           : !table.numbers.empty() ? table.numbers.front().second.size()
                                                    : 0;
  AtomicFile file(path);
  std::ostream& out = file.stream();
  for (std::size_t c = 0; c < header.size(); ++c) out << (c ? "," : "") << header[c];
  out << "\n";
  for (std::size_t r = 0; r < rows; ++r) {
    std::size_t c = 0;
    for (const auto& [name, column] : table.texts) out << (c++ ? "," : "") << column[r];
    for (const auto& [name, column] : table.numbers) {
      out << (c++ ? "," : "") << (std::isfinite(column[r]) ? format_number(column[r]) : "");
    }
    out << "\n";
  }
  file.commit();
}

}  // namespace allocsim
