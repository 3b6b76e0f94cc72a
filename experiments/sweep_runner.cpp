#include "allocsim/experiments/sweep_runner.hpp"

#include <sys/statvfs.h>
#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <map>
#include <mutex>
#include <set>
#include <sstream>
#include <thread>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/simulation.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_reader.hpp"
#include "allocsim/results/run_store.hpp"
#include "allocsim/sim/scenario.hpp"
#include "key_errors.hpp"

namespace allocsim {
namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

// Names a run part or the experiment copy of a run store folder (files this
// tool writes there; anything else in the folder is left alone).
bool written_by_run_store(const std::string& name) {
  return name == "experiment.ini" || name.rfind("experiment.ini.tmp-", 0) == 0 ||
         (name.rfind("run-", 0) == 0 && name.find(".h5") != std::string::npos);
}

std::string read_whole_file(const std::string& path) {
  std::error_code error;
  if (fs::is_directory(path, error)) {
    throw InputError(path, "is a directory, not an experiment file");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, "cannot be read (does the file exist?)");
  std::stringstream buffer;
  buffer << in.rdbuf();
  return buffer.str();
}

// FNV-1a (64 bit) of a file's bytes, as 16 hex digits; "missing" when unreadable.
std::string content_digest(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return "missing";
  std::uint64_t hash = 1469598103934665603ULL;
  char block[1 << 16];
  while (in.read(block, sizeof block) || in.gcount() > 0) {
    for (std::streamsize k = 0; k < in.gcount(); ++k) {
      hash ^= static_cast<unsigned char>(block[k]);
      hash *= 1099511628211ULL;
    }
  }
  char text[17];
  std::snprintf(text, sizeof text, "%016llx", static_cast<unsigned long long>(hash));
  return text;
}

// A value as the identity shows it: numbers normalised ("1e3" = "1000").
std::string normalised(const ExperimentKey& key, const std::string& text) {
  if (key.kind != KeyKind::integer && key.kind != KeyKind::real) return text;
  char number[40];
  std::snprintf(number, sizeof number, "%.17g", std::stod(text));
  return number;
}

const char* const kFileKeys[][2] = {{"scenario.gains_file", "scenario.gains"},
                                    {"scenario.budgets_file", "scenario.budgets"},
                                    {"scenario.capacities_file", "scenario.capacities"},
                                    {"scenario.access_file", "scenario.access"}};

// The data files run values read: (key, path).
std::vector<std::pair<std::string, std::string>> data_files(const ExperimentValues& values) {
  std::vector<std::pair<std::string, std::string>> files;
  for (const auto& [file_key, kind_key] : kFileKeys) {
    if (values.text(kind_key) == "file" && !values.text(file_key).empty()) {
      files.emplace_back(file_key, values.text(file_key));
    }
  }
  return files;
}

std::string effective_experiment(const SweepPlan& plan) {
  std::ostringstream out;
  const bool shape_from_file = plan.base.text("scenario.gains") == "file" &&
                               !plan.base.given("scenario.agents") &&
                               !plan.base.given("scenario.partners");
  for (const auto& key : experiment_keys()) {
    if (std::find(plan.swept_keys.begin(), plan.swept_keys.end(), key.name) !=
        plan.swept_keys.end())
      continue;
    if (key.name == "output.file") continue;  // where, not what
    const bool from_file =
        shape_from_file && (key.name == "scenario.agents" || key.name == "scenario.partners");
    out << key.name << " = "
        << (from_file ? std::string("(from the gains file)")
                      : normalised(key, plan.base.text(key.name)))
        << "\n";
  }
  for (const auto& axis : plan.sweep.axes) {
    const ExperimentKey& key = *find_experiment_key(axis.key);
    out << "sweep." << axis.key << " =";
    for (std::size_t k = 0; k < axis.values.size(); ++k) {
      out << (k ? ", " : " ") << normalised(key, axis.values[k]);
    }
    out << "\n";
  }
  out << "sweep.combine = " << to_string(plan.sweep.combine) << "\n";
  out << "sweep.replicates = " << plan.sweep.replicates << "\n";
  std::set<std::string> seen;
  for (const auto& [label, path] : plan.inputs) {
    if (label == "the experiment file" || !seen.insert(path).second) continue;
    out << "content of " << path << " = " << content_digest(path) << "\n";
  }
  return out.str();
}

// "key = value" lines as a map.
std::map<std::string, std::string> identity_lines(const std::string& text) {
  std::map<std::string, std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    const auto equals = line.find(" = ");
    if (equals != std::string::npos) lines[line.substr(0, equals)] = line.substr(equals + 3);
  }
  return lines;
}

// An identity value as a reader wants it: each number of a list in its
// shortest form ("0.10000000000000001" -> "0.1").
std::string readable(const std::string& value) {
  std::string text, item;
  std::istringstream in(value);
  bool first = true;
  while (std::getline(in, item, ',')) {
    const auto begin = item.find_first_not_of(' ');
    const std::string trimmed = begin == std::string::npos ? "" : item.substr(begin);
    char* end = nullptr;
    const double number = std::strtod(trimmed.c_str(), &end);
    const bool is_number = !trimmed.empty() && end && *end == '\0';
    text += (first ? "" : ", ") + (is_number ? format_number(number) : trimmed);
    first = false;
  }
  return text;
}

// The first difference between two identities, in words; "" when equal.
std::string identity_difference(const std::string& stored, const std::string& now) {
  if (stored == now) return "";
  const auto before = identity_lines(stored);
  const auto after = identity_lines(now);
  if (before.empty()) return "it was written by an older allocsim";
  std::set<std::string> keys;
  for (const auto& [k, v] : before) keys.insert(k);
  for (const auto& [k, v] : after) keys.insert(k);
  for (const auto& key : keys) {
    const auto b = before.find(key);
    const auto a = after.find(key);
    const std::string then = b == before.end() ? "(none)" : readable(b->second);
    const std::string current = a == after.end() ? "(none)" : readable(a->second);
    if (then == current) continue;
    if (key.rfind("content of ", 0) == 0) return key.substr(11) + " changed since";
    return key + " is " + then + " there, " + current + " now";
  }
  return "the experiment changed";
}

// "3 values (0.05, 0.1, 0.2)".
std::string listed_values(const std::set<std::string>& values) {
  std::string text =
      std::to_string(values.size()) + (values.size() == 1 ? " value (" : " values (");
  bool first = true;
  for (const auto& value : values) {
    text += (first ? "" : ", ") + value;
    first = false;
  }
  return text + ")";
}

// Why a finished file holds another number of runs than the plan: the first
// key whose set of values differs (an axis longer or shorter, a key swept
// there and not now, other replicates), named with both sets of values.
std::string run_count_difference(const SweepPlan& plan, const ResultsReader& reader,
                                 const std::vector<std::string>& runs) {
  const auto value_text = [](const Attributes& attributes, const std::string& name) {
    const auto number = attribute_number(attributes, name);
    return number ? format_number(*number) : attribute_text(attributes, name);
  };
  std::map<std::string, std::set<std::string>> there;
  for (const auto& run : runs) {
    const Attributes attributes = reader.run_attributes(run);
    for (const auto& key : experiment_keys())
      there[key.name].insert(value_text(attributes, key.name));
    there[layout::kReplicate].insert(value_text(attributes, layout::kReplicate));
  }
  std::map<std::string, std::set<std::string>> now;
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    const ExperimentValues values = plan.run_values(k);
    for (const auto& key : experiment_keys()) {
      now[key.name].insert(key.kind == KeyKind::integer || key.kind == KeyKind::real
                               ? format_number(values.real(key.name))
                               : values.text(key.name));
    }
    now[layout::kReplicate].insert(
        format_number(static_cast<double>(plan.points[static_cast<std::size_t>(k)].replicate)));
  }
  for (const auto& [name, values] : now) {
    if (name == "output.file" || there[name].size() == values.size()) continue;
    if (name == layout::kReplicate) {
      return "sweep.replicates is " + std::to_string(there[name].size()) + " there, " +
             std::to_string(values.size()) + " now";
    }
    const std::string key = values.size() > 1 ? "sweep." + name : name;
    return key + " has " + listed_values(there[name]) + " there, " + listed_values(values) + " now";
  }
  return "it holds " + std::to_string(runs.size()) + " runs, this experiment has " +
         std::to_string(plan.points.size());
}

// The first difference between a finished results file and the plan, run by
// run and key by key; "" when it holds exactly the plan's runs.
std::string finished_file_difference(const SweepPlan& plan, const ResultsReader& reader) {
  const std::vector<std::string> runs = reader.runs();
  if (runs.size() != plan.points.size()) return run_count_difference(plan, reader, runs);
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    const std::string run = run_name(k);
    if (runs[static_cast<std::size_t>(k)] != run) return "it holds no " + run;
    const Attributes stored = reader.run_attributes(run);
    const ExperimentValues values = plan.run_values(k);
    for (const auto& key : experiment_keys()) {
      if (key.name == "output.file") continue;
      const std::string there = attribute_text(stored, key.name);
      const std::string now = values.text(key.name);
      bool same = there == now;
      if (key.kind == KeyKind::integer || key.kind == KeyKind::real) {
        const auto number = attribute_number(stored, key.name);
        same = number && *number == values.real(key.name);
      }
      if (!same)
        return run + ": " + key.name + " is " + (there.empty() ? "(none)" : there) + " there, " +
               now + " now";
    }
    const auto replicate = attribute_number(stored, layout::kReplicate);
    if (!replicate ||
        *replicate != static_cast<double>(plan.points[static_cast<std::size_t>(k)].replicate)) {
      return run + ": another replicate";
    }
  }
  return "";
}

SummaryTable summary_of(const ResultsReader& reader) {
  SummaryTable table;
  table.texts = reader.summary_texts();
  table.numbers = reader.summary_numbers();
  return table;
}

// Removes what a run store wrote in `folder` (parts, the experiment copy,
// temporaries), then the folder when nothing else is in it.
void remove_run_store_files(const std::string& folder) {
  std::error_code error;
  if (!fs::is_directory(folder, error)) return;
  for (const auto& entry : fs::directory_iterator(folder, error)) {
    if (written_by_run_store(entry.path().filename().string())) fs::remove(entry.path(), error);
  }
  if (fs::is_empty(folder, error)) fs::remove(folder, error);
}

std::string stored_identity(const RunStore& store) {
  // The run store keeps the identity it was opened with in experiment.ini.
  std::ifstream in((fs::path(store.folder()) / "experiment.ini").string(), std::ios::binary);
  if (!in) return "";
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

std::string hdf5_write_cause(const std::string& path, const std::string& detail, int error) {
  return write_failure_cause(path, "HDF5 error: " + detail, error);
}

// Plays run k into its own part file and commits it; a failed write of the
// part is a WriteError naming the part and the cause.
void play_run(const SweepPlan& plan, const RunStore& store, long k,
              const std::string& tool_version) {
  const ExperimentValues values = plan.run_values(k);
  const SimulationSettings settings = simulation_settings(values);
  const std::string path = store.part_path(k);
  try {
    errno = 0;
    ResultsFile part(path, plan.experiment_text, tool_version);
    const std::string run = run_name(k);
    record_run(part, run, static_cast<std::uint64_t>(k), values, settings, nullptr);
    part.run(run).set_integer(layout::kReplicate,
                              plan.points[static_cast<std::size_t>(k)].replicate);
    part.commit();
  } catch (const std::exception&) {
    throw;
  } catch (...) {  // the results layer's own (HDF5) failure: a write that failed
    const int error = errno;
    throw WriteError(path, hdf5_write_cause(path, "the results layer failed", error));
  }
}

// Bytes of the finished parts: the merge writes about as much again.
double parts_bytes(const RunStore& store, long runs) {
  double bytes = 0;
  std::error_code error;
  for (long k = 0; k < runs; ++k) {
    const auto size = fs::file_size(store.part_path(k), error);
    if (!error) bytes += static_cast<double>(size);
  }
  return bytes;
}

// Refuses, before the merge starts, a results file that cannot fit beside
// its parts (the merge would fail midway otherwise).
void require_room_for_merge(const SweepPlan& plan, const RunStore& store, long runs) {
  const double needed = parts_bytes(store, runs);
  struct statvfs disk {};
  const fs::path target = resolve_output(plan.output_file).path;
  const fs::path folder = target.parent_path().empty() ? fs::path(".") : target.parent_path();
  if (::statvfs(folder.c_str(), &disk) != 0) return;
  const double room = static_cast<double>(disk.f_bavail) * static_cast<double>(disk.f_frsize);
  if (needed > room) {
    throw WriteError(plan.output_file,
                     std::string(std::strerror(ENOSPC)) + " (the merge needs about " +
                         format_bytes(needed) + ", " + format_bytes(room) + " is free; the " +
                         std::to_string(runs) + " finished runs are kept in " + store.folder() +
                         ": free some space and run the same command again)");
  }
}

// Merges the parts into the results file; a failed write is a WriteError,
// and the parts stay where they are.
SummaryTable merge_parts(const SweepPlan& plan, const RunStore& store, long runs,
                         const std::string& tool_version) {
  require_room_for_merge(plan, store, runs);
  try {
    errno = 0;
    return store.merge(runs, plan.experiment_text, tool_version, plan.swept_keys);
  } catch (const WriteError&) {
    throw;
  } catch (const std::exception& e) {
    const int error = errno;
    throw WriteError(plan.output_file, hdf5_write_cause(plan.output_file, e.what(), error) +
                                           " (the finished runs are kept in " + store.folder() +
                                           ")");
  } catch (...) {
    const int error = errno;
    throw WriteError(plan.output_file,
                     hdf5_write_cause(plan.output_file, "the results layer failed", error) +
                         " (the finished runs are kept in " + store.folder() + ")");
  }
}

std::vector<long> runs_to_do(const RunStore& store, long total) {
  const std::set<long> done = store.finished();
  std::vector<long> to_do;
  for (long k = 0; k < total; ++k)
    if (!done.count(k)) to_do.push_back(k);
  return to_do;
}

// What is already at the output: nothing, a finished file of this experiment
// (left alone: returns true), or something that is refused.
bool finished_already(const SweepPlan& plan, bool restart, SummaryTable& summary) {
  if (!fs::exists(plan.output_file)) return false;
  std::unique_ptr<ResultsReader> reader;
  try {
    reader = std::make_unique<ResultsReader>(plan.output_file);
  } catch (const InputError&) {
    throw InputError(plan.output_file,
                     std::string("exists and was not written by allocsim (no allocsim format "
                                 "attribute); ") +
                         (restart ? "--restart only replaces files allocsim wrote; " : "") +
                         "remove it or choose another output.file");
  }
  const auto version = attribute_number(reader->root_attributes(), layout::kFormatVersion);
  if (version && *version > static_cast<double>(layout::kResultsFormatVersion)) {
    throw InputError(plan.output_file,
                     "is of results format version " +
                         attribute_text(reader->root_attributes(), layout::kFormatVersion) +
                         ", newer than this allocsim writes (" +
                         std::to_string(layout::kResultsFormatVersion) +
                         "); use a newer allocsim or choose another output.file");
  }
  if (restart) return false;
  const std::string difference = finished_file_difference(plan, *reader);
  if (!difference.empty()) {
    throw InputError(plan.output_file, "holds a finished sweep of a different experiment (" +
                                           difference +
                                           "); pass --restart to replace it, or choose another "
                                           "output.file");
  }
  summary = summary_of(*reader);
  // A kill between the merge's rename and the removal of the parts leaves
  // them behind; the finished file holds every run, so they go now.
  remove_run_store_files(RunStore(plan.output_file).folder());
  return true;
}

// Opens the run store for this plan: refuses an unfinished sweep of another
// experiment (unless restarted), removes orphans of killed writers.
void open_run_store(const SweepPlan& plan, RunStore& store, bool restart) {
  if (restart) remove_run_store_files(store.folder());
  if (fs::is_directory(store.folder())) {
    remove_orphan_temporaries_in(store.folder());
    const std::string stored = stored_identity(store);
    const std::string difference = stored.empty() ? "" : identity_difference(stored, plan.identity);
    if (!difference.empty()) {
      throw InputError(plan.output_file,
                       "an unfinished sweep of a different experiment is in " + store.folder() +
                           " (" + difference +
                           "); run the original command to finish it, or pass --restart to "
                           "discard its runs");
    }
  }
  store.open(plan.identity, false);
}

// Where a key's value came from, for messages: "exp.ini:7: scenario.gains_file".
std::string key_where(const ExperimentValues& values, const std::string& key) {
  const std::string& where = values.where(key);
  if (where == "--" + key) return where;
  if (where == "default") return key;
  return where + ": " + key;
}

// Builds the scenario of every distinct combination of data files, so a bad
// file fails now, naming the key that names it and where that key was given.
void check_data_files(const SweepPlan& plan) {
  std::set<std::string> checked;
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    const ExperimentValues values = plan.run_values(k);
    const auto files = data_files(values);
    if (files.empty()) continue;
    std::string signature = values.text("scenario.agents") + "x" + values.text("scenario.partners");
    for (const auto& [key, path] : files) signature += "|" + key + "=" + path;
    if (!checked.insert(signature).second) continue;
    try {
      const SimulationSettings settings = simulation_settings(values);
      detail::check_as_keys(values, "scenario", [&] { make_scenario(settings.scenario, 0); });
    } catch (const InputError& e) {
      std::string key = files.front().first;
      for (const auto& [file_key, path] : files) {
        if (e.where().rfind(path, 0) == 0) key = file_key;
      }
      if (e.where().rfind("scenario.", 0) == 0 || e.where().rfind("--scenario.", 0) == 0 ||
          e.where().find(".ini") != std::string::npos) {
        throw;
      }
      throw InputError(key_where(values, key), e.what());
    }
  }
}

// The value of --sweep.KEY or --replicates applied to the file's [sweep].
void apply_overrides(SweepSection& sweep, const SweepOverrides& overrides) {
  for (const auto& [key, spec] : overrides.axes) {
    SweepSection one;
    add_sweep_line(one, key, spec, "--sweep." + key);
    bool replaced = false;
    for (auto& axis : sweep.axes) {
      if (axis.key != key) continue;
      axis = one.axes.front();
      replaced = true;
    }
    if (!replaced) sweep.axes.push_back(one.axes.front());
  }
  if (overrides.replicates > 0) sweep.replicates = overrides.replicates;
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
                     const std::vector<std::pair<std::string, std::string>>& command_line,
                     const SweepOverrides& overrides) {
  SweepPlan plan;
  plan.experiment_text = read_whole_file(path);
  read_experiment_file(path, plan.base, &plan.sweep);
  apply_overrides(plan.sweep, overrides);
  for (const auto& axis : plan.sweep.axes) plan.swept_keys.push_back(axis.key);
  for (const auto& [key, text] : command_line) {
    for (const auto& axis : plan.sweep.axes) {
      if (axis.key != key || key == "output.file") continue;
      throw InputError("--" + key, "is swept (" + axis.where + "); replace the axis with --sweep." +
                                       key + " 'VALUES', or remove the value");
    }
    plan.base.set(key, text, "--" + key);
  }
  if (!command_line.empty() || !overrides.axes.empty() || overrides.replicates > 0) {
    std::ostringstream given;
    given << "\n# given on the command line:\n";
    for (const auto& [key, text] : command_line) given << "# --" << key << " " << text << "\n";
    for (const auto& [key, spec] : overrides.axes)
      given << "# --sweep." << key << " '" << spec << "'\n";
    if (overrides.replicates > 0) given << "# --replicates " << overrides.replicates << "\n";
    plan.experiment_text += given.str();
  }
  plan.points = sweep_points(plan.sweep.axes, plan.sweep.combine, plan.sweep.replicates);
  plan.output_file = plan.base.text("output.file");
  if (plan.output_file.empty()) throw InputError(path, "output.file is empty; name a results file");
  const std::string output_where = key_where(plan.base, "output.file");
  require_regular_output(plan.output_file, output_where);
  plan.inputs.emplace_back("the experiment file", path);
  std::set<std::string> listed;
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    const ExperimentValues values = plan.run_values(k);
    simulation_settings(values);  // throws for a bad combination
    for (const auto& [key, file] : data_files(values)) {
      if (listed.insert(key + "=" + file).second) plan.inputs.emplace_back(key, file);
    }
  }
  require_distinct(plan.output_file, output_where, plan.inputs);
  check_data_files(plan);
  plan.identity = effective_experiment(plan);
  return plan;
}

void require_sweep_memory(const SweepPlan& plan, int threads) {
  double largest = 0;
  long at = 0;
  for (long k = 0; k < static_cast<long>(plan.points.size()); ++k) {
    const ExperimentValues values = plan.run_values(k);
    const double bytes = simulation_memory_bytes(values);
    if (bytes > largest) largest = bytes, at = k;
  }
  const long in_flight = std::min<long>(threads, static_cast<long>(plan.points.size()));
  const ExperimentValues values = plan.run_values(at);
  require_memory(
      largest * static_cast<double>(in_flight),
      std::to_string(in_flight) + " run(s) in flight of up to " + values.text("scenario.agents") +
          " x " + values.text("scenario.partners") + " cells",
      key_where(values, "scenario.agents"), "use fewer agents or partners, or fewer --threads");
}

std::unique_ptr<RunDistributor> local_distributor(long count) {
  return std::make_unique<CountingDistributor>(count);
}

std::string SweepReport::brief() const {
  std::ostringstream out;
  out.precision(3);
  if (left_alone) {
    out << output_file << " already holds the " << total
        << " runs of this experiment; left alone (pass --restart to run them again)";
  } else if (complete) {
    out << "wrote " << output_file << ": " << total << " runs";
    if (already_done) out << " (" << already_done << " kept from an earlier start)";
    out << " in " << seconds << " s";
  } else if (interrupted) {
    out << "stopped: " << (already_done + ran) << " of " << total
        << " runs are kept; run the same command again to finish";
  } else if (!failures.empty()) {
    out << failures.size() << " of " << total << " runs failed (first: " << failures.front()
        << "); " << (already_done + ran)
        << " finished runs are kept: the same command retries the failed ones, --restart "
           "starts over after a change of the experiment";
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
  RunStore store(resolve_output(plan.output_file).path);  // a symlink's target
  std::unique_ptr<OutputLock> lock;
  if (request.merge_here) {
    lock = std::make_unique<OutputLock>(plan.output_file);
    remove_orphan_temporaries(plan.output_file);
    if (finished_already(plan, request.restart, report.summary)) {
      report.complete = report.left_alone = true;
      report.already_done = report.total;
    } else {
      open_run_store(plan, store, request.restart);
    }
  }
  if (request.barrier) request.barrier();

  // A finished file left alone: nothing to do (MPI ranks still take part in
  // the collective steps below, with an empty list).
  std::vector<long> to_do =
      report.left_alone ? std::vector<long>{} : runs_to_do(store, report.total);
  if (request.share_to_do) to_do = request.share_to_do(std::move(to_do));
  if (!report.left_alone) report.already_done = report.total - static_cast<long>(to_do.size());

  const auto distributor = request.make_distributor
                               ? request.make_distributor(static_cast<long>(to_do.size()))
                               : local_distributor(static_cast<long>(to_do.size()));
  std::mutex mutex;
  SweepProgress progress{0, static_cast<long>(to_do.size()), report.already_done, 0};
  std::atomic<bool> write_failed{false};
  const auto worker = [&] {
    while (!(request.stop && request.stop->load()) && !write_failed.load()) {
      const long position = distributor->next();
      if (position < 0) return;
      const long k = to_do[static_cast<std::size_t>(position)];
      std::string failure;
      try {
        play_run(plan, store, k, request.tool_version);
      } catch (const WriteError& e) {
        write_failed.store(true);  // a full disk fails every run after it: stop taking new ones
        failure = e.what();
      } catch (const std::exception& e) {
        failure = run_name(k) + ": " + e.what();
      }
      std::lock_guard<std::mutex> guard(mutex);
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
  if (write_failed.load()) {
    for (const auto& failure : report.failures) {
      if (failure.find(": could not be written: ") != std::string::npos) {
        throw WriteError(failure.substr(0, failure.find(": could not be written: ")),
                         failure.substr(failure.find(": could not be written: ") + 24) + " (" +
                             std::to_string(store.finished().size()) +
                             " finished runs are kept in " + store.folder() + ")");
      }
    }
  }

  report.interrupted = request.stop && request.stop->load();
  if (report.left_alone) {
    report.interrupted = false;
    return report;
  }
  const auto finished = store.finished();
  const bool all_there = static_cast<long>(finished.size()) == report.total;
  if (request.merge_here && all_there) {
    report.summary = merge_parts(plan, store, report.total, request.tool_version);
    report.complete = true;
    report.interrupted = false;
  } else if (request.merge_here && finished.empty()) {
    remove_run_store_files(store.folder());  // nothing to keep: a fixed experiment starts afresh
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
