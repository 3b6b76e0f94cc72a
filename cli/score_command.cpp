// allocsim score: an estimator's answers against a benchmark set's truth.
#include <iostream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/benchmark_set.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {

int score_command(const Arguments& args) {
  po::options_description options("score options");
  options.add_options()
      ("truth", po::value<std::string>()->required(), "the set's truth.csv")
      ("answers", po::value<std::string>()->required(),
       "CSV with columns case, epsilon and optionally ci_low, ci_high")
      ("out", po::value<std::string>(), "write the per-case scores to this CSV file")
      ("json", "print one JSON object on stdout");
  po::variables_map vm;
  if (!parse_or_help(args, options, {}, vm, "score", "--truth truth.csv --answers answers.csv [--out F.csv] [--json]"))
    return kExitOk;
  const CsvTable truth = read_csv_table(vm["truth"].as<std::string>());
  const CsvTable answers = read_csv_table(vm["answers"].as<std::string>());
  const ScoreReport report = score_answers(truth, answers);
  if (vm.count("out")) {
    AtomicFile file(vm["out"].as<std::string>());
    for (std::size_t c = 0; c < report.per_case.header.size(); ++c)
      file.stream() << (c ? "," : "") << report.per_case.header[c];
    file.stream() << "\n";
    for (const auto& row : report.per_case.rows) {
      for (std::size_t c = 0; c < row.size(); ++c) file.stream() << (c ? "," : "") << row[c];
      file.stream() << "\n";
    }
    file.commit();
  }
  if (vm.count("json")) {
    std::cout << report.json().str() << "\n";
  } else {
    std::cout << report.text();
  }
  return kExitOk;
}

}  // namespace allocsim::cli
