// allocsim plot: draws the figures of a results file (DESIGN.md section 7).
//
// It reads only what the file holds and skips a figure, with a note on
// stderr, when its data are absent, so it works on files of any stage (a
// bare simulation, or runs with their analysis and a sweep summary). The
// figure data come from plots/figure_data.hpp; values are found under their
// layout names (results/layout.hpp).
#include <iostream>
#include <sstream>

#include "allocsim/plots/figures.hpp"
#include "allocsim/plots/results_figures.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

std::string usage_text() {
  return "Draws the figures of a results file into a folder and prints the files written,\n"
         "one per line. A figure whose data the file does not hold is skipped with a note\n"
         "on stderr. Figures (NAME.png, or .svg/.pdf):\n"
         "  <run>-allocations      emergent allocation beside the entropic and exact couplings\n"
         "                         (runs/<run>/allocation/total, analysis/entropic, "
         "analysis/exact)\n"
         "  <run>-latent-scores    reconstructed traits: latent row and column scores of a "
         "gains\n"
         "                         reconstruction (analyze --latent-rank K --save obs.h5)\n"
         "  <run>-trajectories     prices and marginal errors over the rounds\n"
         "                         (runs/<run>/prices, allocation/snapshots, "
         "allocation/round_end)\n"
         "  nodf-vs-temperature    NODF against the choice temperature, with the null band\n"
         "  wnodf-vs-temperature   the same for WNODF\n"
         "  nodf-z-vs-temperature  z-score of NODF against its null, with the band |z| <= 2\n"
         "  wnodf-z-vs-temperature the same for WNODF\n"
         "  epsilon-vs-temperature estimated epsilon (with its interval) against the true "
         "temperature\n"
         "  distance-vs-temperature distance to the entropic and exact couplings\n"
         "  trend-summary          slope of nodf_z_score per tenfold temperature per level, with "
         "its\n"
         "                         interval, rho and p (as allocsim trend computes them)\n"
         "  estimator-scores       an estimator's score card: estimate, error against truth and "
         "units,\n"
         "                         coverage per band (a scores file of allocsim score --out "
         "scores.h5)\n"
         "Per-run figures are drawn for --run (default: the run with the smallest run_index).\n"
         "Figures against temperature draw one series (colour and marker) per level of --by KEY,\n"
         "or one panel per level with --panels; without --by, a sweep with one swept key besides\n"
         "the temperature (replicates aside) is drawn by that key (said on stdout; --by none\n"
         "pools the runs). See docs/guide.md.";
}

}  // namespace

int plot_command(const Arguments& args) {
  po::options_description options("plot options");
  options.add_options()("file", po::value<std::string>()->required(), "results file (HDF5)")(
      "out-dir", po::value<std::string>()->default_value("."),
      "folder for the figures (created if missing)")(
      "format", po::value<std::string>()->default_value("png"), "png, svg or pdf")(
      "run", po::value<std::string>(),
      "the run whose heatmaps and trajectories are drawn (default: the first)")(
      "script-only", "write the gnuplot scripts (NAME.gp) instead of running gnuplot")(
      "by", po::value<std::string>(),
      "swept key whose levels get one series each (default: the one other swept key; 'none')")(
      "panels", "one panel per level of the --by key instead of one series per level");
  po::positional_options_description positional;
  positional.add("file", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "plot",
                     "RESULTS.h5 [--out-dir DIR] [--format png|svg|pdf] [--run NAME] [--by KEY] "
                     "[--panels]\n            [--script-only]\n\n" +
                         usage_text())) {
    return kExitOk;
  }
  plots::ResultsFiguresRequest request;
  request.out_dir = vm["out-dir"].as<std::string>();
  request.options.format = plots::image_format_from_string(vm["format"].as<std::string>());
  request.options.script_only = vm.count("script-only") > 0;
  if (vm.count("run")) request.run = vm["run"].as<std::string>();
  if (vm.count("by")) request.by = vm["by"].as<std::string>();
  request.panels = vm.count("panels") > 0;
  request.on_factor = [](const std::string& key) {
    std::cout << "figures against temperature drawn by " << key
              << " (the swept key besides the temperature; --by none pools the runs)" << std::endl;
  };
  request.on_written = [](const std::string& file) { std::cout << file << std::endl; };
  const std::string path = vm["file"].as<std::string>();
  std::ostringstream notes;
  const auto written = plots::draw_results_figures(ResultsReader(path), request, notes);
  std::istringstream lines(notes.str());
  for (std::string line; std::getline(lines, line);) std::cerr << "allocsim plot: " << line << "\n";
  if (written.empty()) {
    std::cerr << "allocsim plot: error: " << path << " holds nothing that can be drawn\n";
    return kExitProblem;
  }
  return kExitOk;
}

}  // namespace allocsim::cli
