// What the fuzzing targets check on one input, shared with the normal test
// that replays the seed corpora and the regression cases
// (tests/fuzz_replay_test.cpp), so a fixed finding stays fixed in every build.
//
// Each function returns "" when the input was handled correctly (parsed, or
// refused with an InputError that names the file) and a description of the
// finding otherwise. Crashes and sanitizer reports are findings of their own.
#pragma once

#include <exception>
#include <fstream>
#include <sstream>
#include <string>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"

namespace allocsim::fuzz {

inline bool starts_with(const std::string& text, const std::string& prefix) {
  return text.rfind(prefix, 0) == 0;
}

// A matrix the CSV reader accepted: non-empty, finite, labels matching its
// shape, and the same numbers and labels after a write and a read back.
inline std::string csv_matrix_finding(const LabeledMatrix& m) {
  if (m.values.rows() < 1 || m.values.cols() < 1) return "an empty matrix was accepted";
  if (!m.row_labels.empty() && static_cast<long>(m.row_labels.size()) != m.values.rows())
    return "row labels disagree with the rows";
  if (!m.column_labels.empty() && static_cast<long>(m.column_labels.size()) != m.values.cols())
    return "column labels disagree with the columns";
  if (!m.values.allFinite()) return "a non-finite value was accepted";
  std::ostringstream written;
  write_matrix_csv(written, m.values, m.row_labels, m.column_labels);
  try {
    const LabeledMatrix again = parse_matrix_csv(written.str(), "again.csv");
    if (again.values.rows() != m.values.rows() || again.values.cols() != m.values.cols() ||
        again.values != m.values)
      return "numbers changed on a write and read back:\n" + written.str();
    if (again.row_labels != m.row_labels || again.column_labels != m.column_labels)
      return "labels changed on a write and read back:\n" + written.str();
  } catch (const std::exception& e) {
    return std::string("the written matrix does not read back: ") + e.what() + "\n" + written.str();
  }
  return "";
}

// The CSV reader on `bytes` (missing cells refused, then read as 0): an
// InputError naming the file, or a matrix that passes csv_matrix_finding.
inline std::string csv_reader_finding(const std::string& bytes) {
  try {
    if (split_csv_record(bytes).empty()) return "split_csv_record returned no field";
  } catch (const InputError& e) {
    if (!starts_with(e.what(), "CSV record")) return std::string("split_csv_record: ") + e.what();
  } catch (const std::exception& e) {
    return std::string("split_csv_record: not an InputError: ") + e.what();
  }
  for (const bool missing_as_zero : {false, true}) {
    CsvReadOptions options;
    options.missing_as_zero = missing_as_zero;
    try {
      const std::string finding = csv_matrix_finding(parse_matrix_csv(bytes, "fuzz.csv", options));
      if (!finding.empty()) return finding;
    } catch (const InputError& e) {
      if (!starts_with(e.what(), "fuzz.csv"))
        return std::string("an input error does not name the file: ") + e.what();
    } catch (const std::exception& e) {
      return std::string("not an InputError: ") + e.what();
    }
  }
  return "";
}

// The experiment-file parser on `bytes`, written to `path`: an InputError
// naming the file, or values that the experiment's checks accept or refuse
// with an InputError and whose INI text (as stored in results files)
// reads back to the same text.
inline std::string experiment_file_finding(const std::string& bytes, const std::string& path) {
  const auto write = [&](const std::string& text) {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out << text;
  };
  write(bytes);
  ExperimentValues values;
  try {
    read_experiment_file(path, values);
  } catch (const InputError& e) {
    if (!starts_with(e.what(), path))
      return std::string("an input error does not name the file: ") + e.what();
    return "";
  } catch (const std::exception& e) {
    return std::string("not an InputError: ") + e.what();
  }
  try {  // the checks across keys refuse with InputErrors too
    (void)simulation_settings(values);
  } catch (const InputError&) {
  } catch (const std::exception& e) {
    return std::string("the experiment checks threw a non-InputError: ") + e.what();
  }
  const std::string ini = values.to_ini();
  write(ini);
  ExperimentValues again;
  try {
    read_experiment_file(path, again);
  } catch (const std::exception& e) {
    return std::string("the experiment's own INI text does not read back: ") + e.what() + "\n" +
           ini;
  }
  if (again.to_ini() != ini) return "the experiment's INI text changes on a read back:\n" + ini;
  return "";
}

}  // namespace allocsim::fuzz
