#include "allocsim/results/run_records.hpp"

#include <variant>

#include "allocsim/results/layout.hpp"

namespace allocsim {
namespace {

// Adds the attributes not yet present (numbers as numbers, texts as texts).
void add_attributes(const Attributes& attributes, RunRecord& record) {
  for (const auto& [name, value] : attributes) {
    if (const auto* text = std::get_if<std::string>(&value)) {
      record.texts.emplace(name, *text);
    } else if (const auto* integer = std::get_if<long long>(&value)) {
      record.numbers.emplace(name, static_cast<double>(*integer));
    } else {
      record.numbers.emplace(name, std::get<double>(value));
    }
  }
}

// Fills each run's record from its row of /summary (rows named by the run column).
void add_summary(const ResultsReader& reader, std::vector<RunRecord>& records) {
  std::vector<std::string> row_runs;
  const auto texts = reader.summary_texts();
  for (const auto& [column, values] : texts)
    if (column == layout::kRunColumn) row_runs = values;
  std::map<std::string, RunRecord*> by_name;
  for (auto& record : records) by_name[record.name] = &record;
  const auto numbers = reader.summary_numbers();
  for (std::size_t row = 0; row < row_runs.size(); ++row) {
    const auto found = by_name.find(row_runs[row]);
    if (found == by_name.end()) continue;
    for (const auto& [column, values] : numbers)
      if (row < values.size()) found->second->numbers.emplace(column, values[row]);
    for (const auto& [column, values] : texts)
      if (row < values.size()) found->second->texts.emplace(column, values[row]);
  }
}

}  // namespace

std::optional<double> RunRecord::number(const std::string& key) const {
  const auto it = numbers.find(key);
  if (it == numbers.end()) return std::nullopt;
  return it->second;
}

std::optional<std::string> RunRecord::text(const std::string& key) const {
  const auto it = texts.find(key);
  if (it == texts.end()) return std::nullopt;
  return it->second;
}

std::vector<RunRecord> read_run_records(const ResultsReader& reader) {
  std::vector<RunRecord> records;
  for (const auto& run : reader.runs()) {
    RunRecord record{run, {}, {}};
    add_attributes(reader.run_attributes(run), record);
    add_attributes(reader.group_attributes(run, layout::kAnalysis), record);
    records.push_back(std::move(record));
  }
  add_summary(reader, records);
  return records;
}

}  // namespace allocsim
