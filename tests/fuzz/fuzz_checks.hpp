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
#include <string>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"

namespace allocsim::fuzz {

inline bool starts_with(const std::string& text, const std::string& prefix) {
  return text.rfind(prefix, 0) == 0;
}

// The CSV reader on `bytes`: an InputError naming the file, or a non-empty
// finite matrix whose labels match its shape and whose numbers and labels
// survive a write and read back unchanged (with missing cells read as 0 too).
inline std::string csv_reader_finding(const std::string& bytes) {
  try {
    if (split_csv_record(bytes).empty()) return "split_csv_record returned no field";
  } catch (const InputError& e) {
    if (!starts_with(e.what(), "CSV record")) return std::string("split_csv_record: ") + e.what();
  } catch (const std::exception& e) {
    return std::string("split_csv_record: not an InputError: ") + e.what();
  }
  try {
    const LabeledMatrix m = parse_matrix_csv(bytes, "fuzz.csv");
    if (m.values.rows() < 1 || m.values.cols() < 1) return "an empty matrix was accepted";
    if (!m.row_labels.empty() && static_cast<long>(m.row_labels.size()) != m.values.rows())
      return "row labels disagree with the rows";
    if (!m.column_labels.empty() && static_cast<long>(m.column_labels.size()) != m.values.cols())
      return "column labels disagree with the columns";
    if (!m.values.allFinite()) return "a non-finite value was accepted";
    std::string written;
    for (Eigen::Index i = 0; i < m.values.rows(); ++i) {
      for (Eigen::Index j = 0; j < m.values.cols(); ++j) {
        written += (j ? "," : "") + format_number(m.values(i, j));
      }
      written += "\n";
    }
    if (parse_matrix_csv(written, "again.csv").values != m.values)
      return "numbers changed on a write and read back";
  } catch (const InputError& e) {
    if (!starts_with(e.what(), "fuzz.csv"))
      return std::string("an input error does not name the file: ") + e.what();
  } catch (const std::exception& e) {
    return std::string("not an InputError: ") + e.what();
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
