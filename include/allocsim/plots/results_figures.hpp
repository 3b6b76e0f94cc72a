// Every figure a results file's data allow (DESIGN.md section 7): heatmaps
// and trajectories of one run, and NODF, WNODF, their z-scores against the
// null, epsilon, distances and the trend summary against temperature over
// all runs (split by a swept key, see `by`), and estimator scores. A figure
// whose data the file does not hold is skipped with a line on `notes`; the
// data of each figure come from figure_data.hpp.
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
  // The swept key whose levels split the figures against temperature (one
  // series per level, or one panel with `panels`); "" picks the one swept
  // key besides the temperature when there is exactly one; "none": no split.
  // InputError("--by") when it is not a swept key (choose_factor).
  std::string by;
  bool panels = false;
  std::function<void(const std::string&)> on_factor;   // told the key when picked without asking
  std::function<void(const std::string&)> on_written;  // told each file as soon as it exists
};

// The files written, in order. InputError when the file holds no runs or
// `request.run` is not one of them.
std::vector<std::string> draw_results_figures(const ResultsReader& reader,
                                              const ResultsFiguresRequest& request,
                                              std::ostream& notes);

}  // namespace allocsim::plots
