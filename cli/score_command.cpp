// allocsim score: an estimator's answers against a benchmark set's truth.
#include <iostream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/benchmark_score.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

bool ends_with(const std::string& text, const std::string& end) {
  return text.size() >= end.size() && text.compare(text.size() - end.size(), end.size(), end) == 0;
}

void write_csv(const std::string& path, const CsvTable& table) {
  AtomicFile file(path);
  for (std::size_t c = 0; c < table.header.size(); ++c)
    file.stream() << (c ? "," : "") << table.header[c];
  file.stream() << "\n";
  for (const auto& row : table.rows) {
    for (std::size_t c = 0; c < row.size(); ++c) file.stream() << (c ? "," : "") << row[c];
    file.stream() << "\n";
  }
  file.commit();
}

// A device or FIFO given as --out gets the per-case CSV, written through.
bool written_through(const std::string& out) {
  return resolve_output(out).kind == OutputKind::device_or_fifo;
}

// Every output names a .csv, a .h5, or a device / FIFO; none is an input or
// another output.
void check_outputs(const po::variables_map& vm, const std::vector<std::string>& outputs) {
  std::vector<std::pair<std::string, std::string>> named = {
      {"--truth", vm["truth"].as<std::string>()}, {"--answers", vm["answers"].as<std::string>()}};
  for (const auto& out : outputs) {
    if (!written_through(out) && !ends_with(out, ".csv") && !ends_with(out, ".h5"))
      throw InputError("--out", "'" + out + "' ends neither in .csv nor in .h5");
    if (!written_through(out)) require_distinct(out, "--out", named);
    named.emplace_back("--out", out);
  }
  if (vm.count("groups-csv")) {
    const std::string groups = vm["groups-csv"].as<std::string>();
    if (!written_through(groups)) require_distinct(groups, "--groups-csv", named);
  }
}

}  // namespace

int score_command(const Arguments& args) {
  po::options_description options("score options");
  options.add_options()("truth", po::value<std::string>()->required(), "the set's truth.csv")(
      "answers", po::value<std::string>()->required(),
      "CSV with columns case, epsilon (empty: declined; inf allowed) and optionally ci_low, "
      "ci_high")("out", po::value<std::vector<std::string>>()->composing(),
                 "write the scores: F.csv (one row per case), F.h5 (a results file that `allocsim "
                 "plot` draws), a device or FIFO (the CSV); may be given twice")(
      "groups-csv", po::value<std::string>(),
      "write the table of groups (one row per group) to this CSV file")(
      "json", "print one JSON object on stdout");
  po::variables_map vm;
  if (!parse_or_help(
          args, options, {}, vm, "score",
          "--truth truth.csv --answers answers.csv [--out scores.csv] [--out scores.h5] [--json]"))
    return kExitOk;
  std::vector<std::string> outputs;
  if (vm.count("out")) outputs = vm["out"].as<std::vector<std::string>>();
  check_outputs(vm, outputs);
  const CsvTable truth = read_csv_table(vm["truth"].as<std::string>());
  const CsvTable answers = read_csv_table(vm["answers"].as<std::string>());
  const ScoreReport report = score_answers(truth, answers);
  for (const auto& out : outputs) {
    if (written_through(out) || ends_with(out, ".csv"))
      write_csv(out, report.per_case_table());
    else
      write_score_file(out, report,
                       "# scores of " + vm["answers"].as<std::string>() + " against " +
                           vm["truth"].as<std::string>() + " (allocsim score)\n",
                       ALLOCSIM_VERSION);
  }
  if (vm.count("groups-csv")) write_csv(vm["groups-csv"].as<std::string>(), report.group_table());
  if (vm.count("json")) {
    std::cout << report.json().str() << "\n";
  } else {
    std::cout << report.text();
  }
  return kExitOk;
}

}  // namespace allocsim::cli
