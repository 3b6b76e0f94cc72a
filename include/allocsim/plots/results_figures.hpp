// Every figure a results file's data allow (DESIGN.md section 7): heatmaps
// and trajectories of one run, and NODF, WNODF, epsilon, distances and
// estimator scores against temperature over all runs. A figure whose data
// the file does not hold is skipped with a line on `notes`; the data of each
// figure come from figure_data.hpp.
#pragma once

#include <functional>
#include <iosfwd>
#include <string>
#include <vector>

#include "allocsim/plots/figures.hpp"
#include "allocsim/results/results_reader.hpp"

namespace allocsim::plots {

struct ResultsFiguresRequest {
  std::string out_dir = ".";  // created when missing
  FigureOptions options;
  std::string run;  // the run of the per-run figures; empty: the smallest run_index
  std::function<void(const std::string&)> on_written;  // told each file as soon as it exists
};

// The files written, in order. InputError when the file holds no runs or
// `request.run` is not one of them.
std::vector<std::string> draw_results_figures(const ResultsReader& reader,
                                              const ResultsFiguresRequest& request,
                                              std::ostream& notes);

}  // namespace allocsim::plots
