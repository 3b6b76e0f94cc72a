// allocsim synth: a benchmark set of allocations with known temperature.
#include <iostream>

#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/experiments/benchmark_set.hpp"
#include "allocsim/experiments/sweep.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {

int synth_command(const Arguments& args) {
  po::options_description options("synth options");
  options.add_options()
      ("out-dir", po::value<std::string>()->required(), "new folder for the set")
      ("families", po::value<std::string>()->default_value("trait-distance, rank-product, random"),
       "gains families, a list")
      ("epsilon", po::value<std::string>()->default_value("log(0.02, 0.5, 5)"),
       "true transport temperatures (gain units): a list, linear(a, b, n) or log(a, b, n)")
      ("replicates", po::value<long>()->default_value(4), "cases per family and epsilon")
      ("agents", po::value<long>()->default_value(20), "rows of each allocation")
      ("partners", po::value<long>()->default_value(15), "columns of each allocation")
      ("units", po::value<long>()->default_value(5000), "units in each allocation")
      ("source", po::value<std::string>()->default_value("model"),
       "model (multinomial from the entropic coupling) | price (the sandbox's price rule at T = epsilon)")
      ("seed", po::value<long>()->default_value(1), "seed of every random draw");
  po::variables_map vm;
  if (!parse_or_help(args, options, {}, vm, "synth", "--out-dir DIR [options]")) return kExitOk;
  BenchmarkOptions benchmark;
  benchmark.families = expand_sweep_values(vm["families"].as<std::string>(), "--families");
  benchmark.epsilons = expand_sweep_values(vm["epsilon"].as<std::string>(), "--epsilon");
  benchmark.replicates = vm["replicates"].as<long>();
  benchmark.agents = vm["agents"].as<long>();
  benchmark.partners = vm["partners"].as<long>();
  benchmark.units = vm["units"].as<long>();
  benchmark.source = vm["source"].as<std::string>();
  benchmark.seed = static_cast<std::uint64_t>(vm["seed"].as<long>());
  for (const auto& e : benchmark.epsilons) {
    char* end = nullptr;
    const double value = std::strtod(e.c_str(), &end);
    if (*end != '\0' || !(value > 0)) throw InputError("--epsilon", "'" + e + "' is not a number > 0");
  }
  // Each case holds a few dense agents x partners matrices at once (gains,
  // coupling, allocation, the price rule's state): refuse what cannot fit.
  require_memory(dense_matrix_bytes(static_cast<double>(benchmark.agents),
                                    static_cast<double>(benchmark.partners), 8),
                 "a case of " + std::to_string(benchmark.agents) + " x " +
                     std::to_string(benchmark.partners) + " cells",
                 "--agents", "use fewer agents or partners");
  const std::string folder = vm["out-dir"].as<std::string>();
  const long cases = write_benchmark_set(folder, benchmark);
  std::cout << "wrote " << cases << " cases to " << folder << ": inputs/<case>/ and inputs.h5 "
            << "(what an estimator sees), truth.csv (the true epsilon of each case)\n";
  return kExitOk;
}

}  // namespace allocsim::cli
