// Test driver: the gains reconstruction of one allocation CSV as JSON, for
// the python reference checks (tests/reference/gains_*.py).
//   gains_probe ALLOCATION.csv [--features F.csv ...] [--latent K|auto]
//               [--max-rank K] [--row-traits R.csv --column-traits C.csv]
//               [--form product|distance]
#include <iostream>
#include <string>
#include <vector>

#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/analysis/trait_features.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;

int main(int argc, char** argv) {
  try {
    if (argc < 2) throw InputError("gains_probe", "give an allocation CSV");
    const LabeledMatrix allocation = read_matrix_csv(argv[1]);
    GainsReconstructionInput input;
    input.row_labels = allocation.row_labels;
    input.column_labels = allocation.column_labels;
    GainsReconstructionOptions options;
    std::string row_traits, column_traits, form = "distance";
    for (int k = 2; k < argc; ++k) {
      const std::string arg = argv[k];
      if (arg == "--features") {
        while (k + 1 < argc && std::string(argv[k + 1]).rfind("--", 0) != 0) {
          input.features.push_back(read_matrix_csv(argv[++k]).values);
          input.feature_names.push_back(argv[k]);
        }
      } else if (arg == "--latent" && k + 1 < argc) {
        const std::string rank = argv[++k];
        options.latent.emplace();
        options.latent->rank = rank == "auto" ? -1 : std::stol(rank);
      } else if (arg == "--max-rank" && k + 1 < argc) {
        if (!options.latent) options.latent.emplace();
        options.latent->max_rank = std::stol(argv[++k]);
      } else if (arg == "--row-traits" && k + 1 < argc) {
        row_traits = argv[++k];
      } else if (arg == "--column-traits" && k + 1 < argc) {
        column_traits = argv[++k];
      } else if (arg == "--form" && k + 1 < argc) {
        form = argv[++k];
      } else {
        throw InputError(arg, "unknown argument");
      }
    }
    if (!row_traits.empty()) {
      const LabeledMatrix r = read_matrix_csv(row_traits), c = read_matrix_csv(column_traits);
      const TraitFeatures t = build_trait_features({r.values, r.column_labels, row_traits},
                                                   {c.values, c.column_labels, column_traits},
                                                   trait_feature_form_from_string(form));
      input.features.insert(input.features.end(), t.features.begin(), t.features.end());
      input.feature_names.insert(input.feature_names.end(), t.names.begin(), t.names.end());
    }
    const Matrix zero = Matrix::Zero(allocation.values.rows(), allocation.values.cols());
    const ObservedAllocation observed = observe_allocation(allocation.values, zero, std::nullopt);
    const GainsReconstructionReport report = reconstruct_gains(observed, input, options);
    std::cout << gains_reconstruction_json(report).str() << "\n";
    print_gains_reconstruction(std::cerr, report);
    return 0;
  } catch (const std::exception& e) {
    std::cerr << e.what() << "\n";
    return 2;
  }
}
