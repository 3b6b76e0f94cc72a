#include "allocsim/results/run_store.hpp"

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"

namespace allocsim {
namespace fs = std::filesystem;
namespace {

constexpr const char* kExperimentCopy = "experiment.ini";

// Removes what a run store writes in its folder (run parts, the experiment
// copy, their temporaries), then the folder when nothing else is left in it:
// a file someone else put there is never removed.
void remove_own_files(const std::string& folder) {
  std::error_code error;
  for (const auto& entry : fs::directory_iterator(folder, error)) {
    const std::string name = entry.path().filename().string();
    const bool own = name.rfind(kExperimentCopy, 0) == 0 ||
                     (name.rfind("run-", 0) == 0 && name.find(".h5") != std::string::npos);
    if (own) fs::remove(entry.path(), error);
  }
  if (fs::is_empty(folder, error)) fs::remove(folder, error);
}

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream buffer;
  buffer << in.rdbuf();
  return buffer.str();
}

// Columns of /summary, filled run by run; a run without a column gets NaN / "".
class SummaryBuilder {
 public:
  explicit SummaryBuilder(long runs) : runs_(runs) {}

  void number(const std::string& column, long row, double value) {
    auto& values = numbers_[column];
    if (values.empty()) {
      values.assign(static_cast<std::size_t>(runs_), std::numeric_limits<double>::quiet_NaN());
      number_order_.push_back(column);
    }
    values[static_cast<std::size_t>(row)] = value;
  }
  void text(const std::string& column, long row, const std::string& value) {
    auto& values = texts_[column];
    if (values.empty()) {
      values.assign(static_cast<std::size_t>(runs_), "");
      text_order_.push_back(column);
    }
    values[static_cast<std::size_t>(row)] = value;
  }
  SummaryTable table() const {
    SummaryTable table;
    for (const auto& name : text_order_) table.texts.emplace_back(name, texts_.at(name));
    for (const auto& name : number_order_) table.numbers.emplace_back(name, numbers_.at(name));
    return table;
  }

 private:
  long runs_;
  std::map<std::string, std::vector<double>> numbers_;
  std::map<std::string, std::vector<std::string>> texts_;
  std::vector<std::string> number_order_, text_order_;
};

void add_summary_row(SummaryBuilder& summary, long row, const std::string& run,
                     const ResultsReader& part, const std::vector<std::string>& swept_keys) {
  const Attributes attributes = part.run_attributes(run);
  summary.text(layout::kRunColumn, row, run);
  summary.text(layout::kStatus, row, attribute_text(attributes, layout::kStatus));
  for (const auto& key : swept_keys) {
    const auto number = attribute_number(attributes, key);
    if (number) {
      summary.number(key, row, *number);
    } else {
      summary.text(key, row, attribute_text(attributes, key));
    }
  }
  for (const char* key :
       {layout::kSeed, layout::kRunIndex, layout::kReplicate, layout::kCapacityError,
        layout::kWindowChange, layout::kDriftSinceBurnIn}) {
    if (const auto number = attribute_number(attributes, key)) summary.number(key, row, *number);
  }
  const std::string settled = attribute_text(attributes, layout::kSettled);
  if (!settled.empty()) summary.text(layout::kSettled, row, settled);
  for (const auto& [name, value] : part.group_attributes(run, layout::kAnalysis)) {
    if (const auto* d = std::get_if<double>(&value)) summary.number(name, row, *d);
    if (const auto* i = std::get_if<long long>(&value))
      summary.number(name, row, static_cast<double>(*i));
  }
}

}  // namespace

RunStore::RunStore(std::string results_path)
    : results_path_(std::move(results_path)), folder_(results_path_ + ".parts") {}

void RunStore::open(const std::string& experiment_text, bool restart) {
  const std::string copy = (fs::path(folder_) / kExperimentCopy).string();
  if (fs::exists(folder_) && restart) remove_own_files(folder_);
  if (fs::exists(copy)) {
    if (read_text(copy) != experiment_text) {
      throw InputError(results_path_,
                       "an unfinished sweep of a different experiment is in " + folder_ +
                           "; run the original experiment to finish it, or pass --restart to "
                           "discard its runs");
    }
    return;
  }
  std::error_code error;
  fs::create_directories(folder_, error);
  if (error) {
    throw InputError(folder_, "cannot be created (" + error.message() +
                                  "); check that the results folder exists and is writable");
  }
  AtomicFile file(copy);
  file.stream() << experiment_text;
  file.commit();
}

std::string RunStore::part_path(long index) const {
  return (fs::path(folder_) / (run_name(index) + ".h5")).string();
}

std::set<long> RunStore::finished() const {
  std::set<long> indices;
  if (!fs::exists(folder_)) return indices;
  for (const auto& entry : fs::directory_iterator(folder_)) {
    const std::string name = entry.path().filename().string();
    long index = 0;
    char tail[8] = {0};
    // Only complete parts: "run-NNNNNN.h5" exactly (temporaries end in .tmp-PID).
    if (std::sscanf(name.c_str(), "run-%ld.%7s", &index, tail) == 2 && std::string(tail) == "h5" &&
        name == run_name(index) + ".h5") {
      indices.insert(index);
    }
  }
  return indices;
}

SummaryTable RunStore::merge(long runs, const std::string& experiment_text,
                             const std::string& tool_version,
                             const std::vector<std::string>& swept_keys) const {
  ResultsFile results(results_path_, experiment_text, tool_version);
  SummaryBuilder summary(runs);
  for (long index = 0; index < runs; ++index) {
    const std::string run = run_name(index);
    const ResultsReader part(part_path(index));
    results.copy_run_from(part_path(index), run);
    add_summary_row(summary, index, run, part, swept_keys);
  }
  SummaryTable table = summary.table();
  results.write_summary(table);
  results.commit();
  remove_own_files(folder_);
  return table;
}

}  // namespace allocsim
