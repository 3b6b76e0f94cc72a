// allocsim demo: a built-in temperature sweep, analysed and drawn, told in
// plain words. The scenario is invented for the demonstration.

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <map>
#include <sstream>
#include <thread>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/sweep_runner.hpp"
#include "allocsim/experiments/trend.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace fs = std::filesystem;
namespace {

// Forty fishing boats (agents) land their catch at thirty harbour markets
// (partners) with limited cold storage (capacities, Zipf-unequal); a boat
// earns more where the buyers want its kind of fish (trait distance). The
// boats' choice noise T is swept; every run is analysed.
constexpr const char* kDemoExperiment =
    R"(# allocsim demo: boats choosing harbour markets, at six choice temperatures
[scenario]
agents = 40
partners = 30
gains = trait-distance
capacities = zipf
capacities_exponent = 0.8
seed = 2026

[dynamics]
rule = price
rounds = 400
units = 20000
burn_in = 100
window = 25

[analysis]
enabled = true
binarize = revealed-advantage
nulls = curveball
null_samples = 200

[sweep]
dynamics.temperature = log(0.01, 0.5, 6)
replicates = 2

[output]
file = demo.h5
)";

struct Column {
  std::vector<double> values;
  bool present = false;
};

std::map<std::string, Column> summary_columns(const std::string& path) {
  std::map<std::string, Column> columns;
  for (auto& [name, values] : ResultsReader(path).summary_numbers()) columns[name] = {values, true};
  return columns;
}

std::string number(double value, int digits = 3) {
  std::ostringstream out;
  out.precision(digits);
  out << value;
  return out.str();
}

// What the sweep found, run by run grouped by temperature, in sentences.
void tell_findings(std::ostream& out, const std::string& results) {
  auto c = summary_columns(results);
  const auto& T = c["dynamics.temperature"].values;
  const auto& eps = c["epsilon"].values;
  const auto& low = c["epsilon_ci_low"].values;
  const auto& high = c["epsilon_ci_high"].values;
  long covered = 0, estimated = 0;
  double worst = 0;
  for (std::size_t k = 0; k < T.size(); ++k) {
    if (!std::isfinite(eps[k]) || eps[k] <= 0) continue;
    ++estimated;
    if (low[k] <= T[k] && T[k] <= high[k]) ++covered;
    worst = std::max(worst, std::abs(eps[k] / T[k] - 1));
  }
  out << "Temperature: the transport temperature fitted to each emergent allocation came within "
      << number(100 * worst, 2) << "% of the choice temperature that produced it (" << estimated
      << " of " << T.size() << " runs estimated); its 95% interval covered the true "
      << "value in " << covered << " of " << estimated << " runs.\n";
  out << "      T   fitted epsilon    NODF   NODF of curveball nulls       z\n";
  for (std::size_t k = 0; k < T.size(); ++k) {
    char line[160];
    std::snprintf(line, sizeof line, "%7.4g   %14.4g  %6.1f   %12.1f +- %-8.2g  %6.1f\n", T[k],
                  eps[k], c["nodf"].values[k], c["nodf_null_mean"].values[k],
                  c["nodf_null_sd"].values[k], c["nodf_z_score"].values[k]);
    out << line;
  }
  // The closing answer is what `allocsim trend` says of the same summary.
  TrendOptions trend_options;
  const TrendResult trend =
      measure_trend(T, c["nodf_z_score"].values, c["nodf_z_score"].values, trend_options);
  out << "Nestedness (links where a market takes more of a boat's catch than its share overall): "
      << "NODF went from " << number(c["nodf"].values.front()) << " at T = " << number(T.front())
      << " to " << number(c["nodf"].values.back()) << " at T = " << number(T.back())
      << "; against curveball nulls, which keep every boat's and market's number of links "
      << "(allocsim trend " << results << "): "
      << describe_trend(trend,
                        {"", "NODF's z-score", "temperature",
                         "more nested than their curveball null", "less nested"},
                        trend_options)
      << "\n";
  out << "Distance (total variation) to the entropic coupling at the fitted epsilon: at most "
      << number(*std::max_element(c["entropic_total_variation"].values.begin(),
                                  c["entropic_total_variation"].values.end()),
                2)
      << "; to the exact optimum: from " << number(c["exact_total_variation"].values.front(), 2)
      << " at the lowest T to " << number(c["exact_total_variation"].values.back(), 2)
      << " at the highest.\n";
}

}  // namespace

int demo_command(const Arguments& args) {
  po::options_description options("demo options");
  options.add_options()(
      "out-dir", po::value<std::string>()->default_value("allocsim-demo"),
      "new folder for the results and figures (default: allocsim-demo, or -2, -3, ... when taken)")(
      "threads",
      po::value<int>()->default_value(
          static_cast<int>(std::max(1u, std::thread::hardware_concurrency()))),
      "worker threads");
  po::variables_map vm;
  if (!parse_or_help(args, options, {}, vm, "demo", "[--out-dir DIR] [--threads N]"))
    return kExitOk;
  const int threads = checked_threads(vm);
  fs::path folder = vm["out-dir"].as<std::string>();
  // The default folder is taken: run again into allocsim-demo-2, -3, ...
  for (int k = 2; vm["out-dir"].defaulted() && fs::exists(folder) && !fs::is_empty(folder); ++k) {
    folder = "allocsim-demo-" + std::to_string(k);
  }
  if (fs::exists(folder) && !fs::is_empty(folder)) {
    throw InputError(folder.string(),
                     "exists and is not empty; the demo writes into a new folder "
                     "(remove it or give --out-dir)");
  }
  NewFolder made(folder.string(), "--out-dir");  // removed again if nothing could be written
  const std::string experiment = (folder / "demo.ini").string();
  {
    AtomicFile file(experiment);
    file.stream() << kDemoExperiment;
    file.commit();
  }
  made.keep();
  const std::string results = (folder / "demo.h5").string();
  std::cerr << "allocsim demo: 40 boats choose among 30 harbour markets at six choice "
               "temperatures, two runs each; every run is analysed\n";
  SweepPlan plan = plan_sweep(experiment, {{"output.file", results}});
  SweepRequest request;
  request.threads = threads;
  request.tool_version = ALLOCSIM_VERSION;
  silence_hdf5_diagnostics();
  const SweepReport report = run_sweep(plan, request);
  if (!report.complete) throw std::runtime_error(report.brief());
  write_summary_csv((folder / "summary.csv").string(), report.summary);

  std::ostringstream figures;
  auto* saved = std::cout.rdbuf(figures.rdbuf());
  int plotted = kExitProblem;
  try {
    plotted = plot_command({results, "--out-dir", (folder / "figures").string()});
  } catch (...) {
    std::cout.rdbuf(saved);
    throw;
  }
  std::cout.rdbuf(saved);

  std::cout << "allocsim demo: " << report.total << " runs in " << number(report.seconds, 2)
            << " s\n\n";
  tell_findings(std::cout, results);
  std::cout << "\nFiles:\n  " << experiment << "   the experiment (rerun: allocsim run "
            << experiment << ")\n  " << results << "   every run, its allocations and analysis\n  "
            << (folder / "summary.csv").string() << "   one row per run\n";
  std::string line;
  std::istringstream listed(figures.str());
  while (std::getline(listed, line)) {
    if (!line.empty()) std::cout << "  " << line << "\n";
  }
  std::cout << "\nA fitted temperature is a model-based summary: it assumes the gains and a "
               "logit choice, and means something only against null models.\n";
  return plotted;
}

}  // namespace allocsim::cli
