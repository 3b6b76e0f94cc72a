#include "gains_reconstruction_output.hpp"

#include <filesystem>

#include "allocsim/analysis/trait_features.hpp"
#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim::cli {
namespace {

// Rows (or columns) of a file matched to the allocation's: by label when
// both carry labels, else by position (the counts must agree).
std::vector<Eigen::Index> match_side(const std::vector<std::string>& reference,
                                     Eigen::Index reference_count,
                                     const std::vector<std::string>& other,
                                     Eigen::Index other_count, const std::string& source,
                                     const std::string& side) {
  std::vector<Eigen::Index> order;
  if (!reference.empty() && !other.empty()) {
    for (const std::string& label : reference) {
      const auto at = std::find(other.begin(), other.end(), label);
      if (at == other.end())
        throw InputError(source,
                         "has no " + side + " labelled '" + label + "', which the allocation has");
      order.push_back(static_cast<Eigen::Index>(at - other.begin()));
    }
    if (other_count != reference_count)
      throw InputError(source, "has " + std::to_string(other_count) + " " + side +
                                   "s but the allocation has " + std::to_string(reference_count));
    return order;
  }
  if (other_count != reference_count)
    throw InputError(source, "has " + std::to_string(other_count) + " " + side +
                                 "s but the allocation has " + std::to_string(reference_count));
  for (Eigen::Index k = 0; k < reference_count; ++k) order.push_back(k);
  return order;
}

Matrix read_feature(const std::string& path, const LabeledMatrix& allocation) {
  const LabeledMatrix f = read_matrix_csv(path);
  const auto rows = match_side(allocation.row_labels, allocation.values.rows(), f.row_labels,
                               f.values.rows(), path, "row");
  const auto cols = match_side(allocation.column_labels, allocation.values.cols(), f.column_labels,
                               f.values.cols(), path, "column");
  Matrix out(allocation.values.rows(), allocation.values.cols());
  for (std::size_t i = 0; i < rows.size(); ++i)
    for (std::size_t j = 0; j < cols.size(); ++j)
      out(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) = f.values(rows[i], cols[j]);
  return out;
}

TraitTable read_traits(const std::string& path, const std::vector<std::string>& labels,
                       Eigen::Index count, const std::string& side) {
  const LabeledMatrix t = read_matrix_csv(path);
  const auto order = match_side(labels, count, t.row_labels, t.values.rows(), path, side);
  TraitTable table;
  table.source = path;
  table.names = t.column_labels;
  table.values.resize(count, t.values.cols());
  for (std::size_t k = 0; k < order.size(); ++k)
    table.values.row(static_cast<Eigen::Index>(k)) = t.values.row(order[k]);
  return table;
}

LatentAssociationOptions latent_options(const po::variables_map& vm) {
  LatentAssociationOptions options;
  const std::string rank = vm["latent-rank"].as<std::string>();
  if (rank == "auto") {
    options.rank = -1;
  } else {
    try {
      std::size_t used = 0;
      options.rank = std::stol(rank, &used);
      if (used != rank.size() || options.rank < 0) throw std::invalid_argument(rank);
    } catch (const std::exception&) {
      throw InputError("--latent-rank", "'" + rank + "' is not a whole number >= 0 or auto");
    }
  }
  options.max_rank = vm["max-latent-rank"].as<long>();
  if (options.max_rank < 1) throw InputError("--max-latent-rank", "must be at least 1");
  return options;
}

}  // namespace

void add_gains_reconstruction_options(po::options_description& options) {
  options.add_options()("features", po::value<std::vector<std::string>>()->multitoken(),
                        "gains unknown: fit gains/epsilon = sum_k beta_k F_k to these CSV matrices "
                        "(agents x partners)")(
      "row-traits", po::value<std::string>(),
      "gains unknown: CSV of row traits (labels in the first "
      "column, one column per trait)")("column-traits", po::value<std::string>(),
                                       "gains unknown: CSV of column traits (as --row-traits)")(
      "trait-form", po::value<std::string>()->default_value("distance"),
      "feature of a trait pair: distance = -(x_i - y_j)^2 | product = x_i y_j (the same "
      "information; see README)")("latent-rank", po::value<std::string>(),
                                  "gains unknown: fit the row-column association "
                                  "model RC(K) with K latent dimensions, or auto (BIC)")(
      "max-latent-rank", po::value<long>()->default_value(5), "largest K that auto tries");
}

bool gains_reconstruction_requested(const po::variables_map& vm) {
  return vm.count("features") || vm.count("row-traits") || vm.count("column-traits") ||
         vm.count("latent-rank");
}

GainsReconstructionReport reconstruct_from_options(const po::variables_map& vm,
                                                   const ObservedAllocation& observed,
                                                   const LabeledMatrix& allocation,
                                                   const std::string& allocation_source) {
  (void)allocation_source;
  GainsReconstructionInput input;
  input.row_labels = allocation.row_labels;
  input.column_labels = allocation.column_labels;
  if (vm.count("features"))
    for (const std::string& path : vm["features"].as<std::vector<std::string>>()) {
      input.features.push_back(read_feature(path, allocation));
      input.feature_names.push_back(path);
    }
  if (vm.count("row-traits") != vm.count("column-traits"))
    throw InputError(vm.count("row-traits") ? "--row-traits" : "--column-traits",
                     "give both --row-traits and --column-traits");
  if (vm.count("row-traits")) {
    const TraitFeatureForm form = [&] {
      try {
        return trait_feature_form_from_string(vm["trait-form"].as<std::string>());
      } catch (const InputError& e) {
        throw InputError("--trait-form", "'" + vm["trait-form"].as<std::string>() +
                                             "' is not one of distance, product");
      }
    }();
    const TraitFeatures traits = build_trait_features(
        read_traits(vm["row-traits"].as<std::string>(), allocation.row_labels,
                    allocation.values.rows(), "row"),
        read_traits(vm["column-traits"].as<std::string>(), allocation.column_labels,
                    allocation.values.cols(), "column"),
        form);
    input.features.insert(input.features.end(), traits.features.begin(), traits.features.end());
    input.feature_names.insert(input.feature_names.end(), traits.names.begin(), traits.names.end());
  }
  GainsReconstructionOptions options;
  if (vm.count("confidence")) options.features.confidence = vm["confidence"].as<double>();
  if (vm.count("latent-rank")) options.latent = latent_options(vm);
  try {
    return reconstruct_gains(observed, input, options);
  } catch (const InputError& e) {
    if (e.where() != "latent rank") throw;
    throw e.at("--latent-rank");
  }
}

std::optional<GainsReconstructionReport> reconstruct_if_asked(const po::variables_map& vm,
                                                              const AllocationReport& report) {
  if (!gains_reconstruction_requested(vm)) return std::nullopt;
  const std::string source = vm["allocation"].as<std::string>();
  return reconstruct_from_options(vm, report.observed, read_matrix_csv(source), source);
}

std::vector<std::string> export_gains_reconstruction(const GainsReconstructionReport& report,
                                                     double allocation_total,
                                                     const std::string& folder) {
  std::filesystem::create_directories(folder);
  std::vector<std::string> written;
  const auto path = [&](const char* name) {
    return (std::filesystem::path(folder) / name).string();
  };
  if (report.features) {
    const GainsFitResult& f = *report.features;
    Matrix table(f.theta_over_epsilon.size(), 4);
    table.col(0) = f.theta_over_epsilon;
    table.col(1) = f.standard_errors;
    table.col(2) = f.ci_low;
    table.col(3) = f.ci_high;
    write_matrix_csv(path("feature_weights.csv"), table, f.names,
                     {"weight", "standard_error", "interval_low", "interval_high"});
    written.push_back(path("feature_weights.csv"));
    write_matrix_csv(path("coupling_features.csv"), f.coupling * allocation_total,
                     report.row_labels, report.column_labels);
    written.push_back(path("coupling_features.csv"));
  }
  Matrix models(static_cast<Eigen::Index>(report.models.size()), 5);
  std::vector<std::string> names;
  for (std::size_t k = 0; k < report.models.size(); ++k) {
    const ModelFitSummary& s = report.models[k];
    models.row(static_cast<Eigen::Index>(k)) << s.deviance,
        static_cast<double>(s.degrees_of_freedom), static_cast<double>(s.parameters), s.aic, s.bic;
    names.push_back(s.model);
  }
  write_matrix_csv(path("model_table.csv"), models, names,
                   {"deviance", "degrees_of_freedom", "parameters", "aic", "bic"});
  written.push_back(path("model_table.csv"));
  if (report.latent && report.latent->rank > 0) {
    std::vector<std::string> dimensions;
    for (long k = 1; k <= report.latent->rank; ++k)
      dimensions.push_back("dimension_" + std::to_string(k));
    write_matrix_csv(path("latent_row_scores.csv"), report.latent->row_scores, report.row_labels,
                     dimensions);
    write_matrix_csv(path("latent_column_scores.csv"), report.latent->column_scores,
                     report.column_labels, dimensions);
    written.push_back(path("latent_row_scores.csv"));
    written.push_back(path("latent_column_scores.csv"));
  }
  if (report.latent) {
    write_matrix_csv(path("coupling_latent.csv"), report.latent->coupling * allocation_total,
                     report.row_labels, report.column_labels);
    written.push_back(path("coupling_latent.csv"));
  }
  return written;
}

}  // namespace allocsim::cli
