// Labelled CSV files of one allocation's analysis (`analyze --export-dir D`).
//
// Written into `folder` (created when missing), each file atomically:
//   matrix_nested.csv        the analysed allocation, values as given, rows and
//                            columns in nested order (decreasing degree)
//   links_nested.csv         its binarised form (0/1), same order
//   agents.csv, partners.csv one row per analysed agent (partner) in
//                            Fitness-Complexity order: label, rank, degree,
//                            fitness (complexity), eci (pci), eci_rank (pci_rank),
//                            total (the row's or column's sum of values)
//   left_out.csv             side, label of each all-zero row and column
//   coupling_exact.csv       with gains: the exact optimal coupling, and
//   coupling_entropic.csv    the entropic coupling at the fitted epsilon, in the
//                            allocation's units (scaled to its total), same order
//   null_comparison.csv      with --nulls: metric, model, samples, seed, observed,
//                            null_mean, null_sd, z_score, p_upper, p_two_sided
// Without labels in the input, rows are named "row i" and columns "column j"
// (positions in the input file, from 1). Returns the paths written.
#pragma once

#include <string>
#include <vector>

#include "allocsim/analysis/allocation_report.hpp"

namespace allocsim {

std::vector<std::string> export_report(const AllocationReport& report, const std::string& folder);

// Every file name export_report may write (to check, before any analysis,
// that no input would be overwritten).
const std::vector<std::string>& report_export_names();

}  // namespace allocsim
