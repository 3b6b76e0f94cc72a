// allocsim synth: a blind benchmark set of allocations with known temperature.
#include <iostream>

#include "allocsim/core/error.hpp"
#include "allocsim/experiments/benchmark_set.hpp"
#include "allocsim/experiments/sweep.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

void report_progress(long done, long total) {
  if (done % 50 == 0 || done == total)
    std::cerr << "\rsynth: " << done << " of " << total << " cases" << std::flush;
  if (done == total) std::cerr << "\n";
}

std::string usage() {
  return "--out-dir DIR [--truth-dir DIR] [options]\n\n"
         "Writes a benchmark set: README.txt, inputs.h5 and inputs/<case>/ (what an estimator\n"
         "may see) and truth.csv (the true epsilon of each case, in --truth-dir when given).\n"
         "Case names are a seeded random permutation. Numbers: a value, a list or\n"
         "log(a, b, n) / linear(a, b, n) (a grid the cases cycle through), or\n"
         "loguniform(a, b) / uniform(a, b) (drawn per case).";
}

}  // namespace

int synth_command(const Arguments& args) {
  po::options_description options("synth options");
  options.add_options()("out-dir", po::value<std::string>()->required(),
                        "new (or empty) folder for the set")(
      "truth-dir", po::value<std::string>(),
      "folder for truth.csv, apart from the inputs (default: --out-dir)")(
      "families", po::value<std::string>()->default_value("trait-distance, rank-product, random"),
      "gains families, a list (rank-product, trait-distance, random, features)")(
      "source", po::value<std::string>()->default_value("model"),
      "how allocations are made, a list: model (multinomial from the entropic coupling), price, "
      "gumbel, queue, learn (the sandbox's rules at T = epsilon), mixed-noise (probit: normal "
      "shocks); "
      "queue, learn and mixed-noise are misspecified")(
      "epsilon", po::value<std::string>()->default_value("loguniform(0.01, 1)"),
      "true transport temperature (gain units): a law drawn per case, or a grid")(
      "units", po::value<std::string>()->default_value("5000"),
      "units in each allocation: a number, a grid, or e.g. loguniform(200, 50000)")(
      "shape", po::value<std::string>(),
      "agents and partners per case, e.g. 'agents=10..60, partners=10..80' "
      "(default: --agents x --partners)")("agents", po::value<long>()->default_value(20),
                                          "rows of each allocation (without --shape)")(
      "partners", po::value<long>()->default_value(15),
      "columns of each allocation (without --shape)")(
      "budgets", po::value<std::string>()->default_value("lognormal(0.5)"),
      "laws of the budgets, one drawn per case: uniform, zipf(EXPONENT), lognormal(SIGMA)")(
      "capacities", po::value<std::string>()->default_value("lognormal(0.5)"),
      "laws of the capacities, likewise")(
      "cases", po::value<long>()->default_value(0),
      "number of cases (0: one per family, source and listed epsilon, times --replicates)")(
      "replicates", po::value<long>()->default_value(20),
      "cases per family, source and listed epsilon (--cases 0)")(
      "seed", po::value<long>()->default_value(1), "seed of every random draw");
  po::variables_map vm;
  if (!parse_or_help(args, options, {}, vm, "synth", usage())) return kExitOk;
  BenchmarkOptions benchmark;
  benchmark.families = expand_sweep_values(vm["families"].as<std::string>(), "--families");
  benchmark.sources.clear();
  for (const auto& word : expand_sweep_values(vm["source"].as<std::string>(), "--source"))
    benchmark.sources.push_back(benchmark_source_from_string(word, "--source"));
  benchmark.epsilon = parse_number_law(vm["epsilon"].as<std::string>(), "--epsilon");
  benchmark.units = parse_number_law(vm["units"].as<std::string>(), "--units");
  if (vm.count("shape")) {
    if (!vm["agents"].defaulted() || !vm["partners"].defaulted())
      throw InputError("--shape", "give either --shape or --agents/--partners, not both");
    benchmark.shape = parse_shape_law(vm["shape"].as<std::string>(), "--shape");
  } else {
    const std::string shape = "agents=" + std::to_string(vm["agents"].as<long>()) +
                              ", partners=" + std::to_string(vm["partners"].as<long>());
    const long agents = vm["agents"].as<long>();
    benchmark.shape =
        parse_shape_law(shape, agents < 2 || agents > 1000000000 ? "--agents" : "--partners");
    benchmark.shape.where = "--agents";
  }
  benchmark.budgets = parse_marginal_laws(vm["budgets"].as<std::string>(), "--budgets");
  benchmark.capacities = parse_marginal_laws(vm["capacities"].as<std::string>(), "--capacities");
  benchmark.cases = vm["cases"].as<long>();
  benchmark.replicates = vm["replicates"].as<long>();
  benchmark.seed = static_cast<std::uint64_t>(vm["seed"].as<long>());
  benchmark.tool_version = ALLOCSIM_VERSION;
  const std::string folder = vm["out-dir"].as<std::string>();
  const std::string truth_dir = vm.count("truth-dir") ? vm["truth-dir"].as<std::string>() : "";
  const long cases = write_benchmark_set(folder, truth_dir, benchmark, report_progress);
  std::cout << "wrote " << cases << " cases to " << folder
            << ": README.txt, inputs.h5 and inputs/<case>/ (what an estimator sees); truth in "
            << (truth_dir.empty() ? folder : truth_dir) << "/truth.csv\n";
  return kExitOk;
}

}  // namespace allocsim::cli
