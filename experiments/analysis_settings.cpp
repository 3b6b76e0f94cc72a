#include "allocsim/experiments/analysis_settings.hpp"

#include "allocsim/core/random.hpp"
#include "key_errors.hpp"

namespace allocsim {
namespace {

AllocationAnalysisOptions read_analysis_options(const ExperimentValues& values,
                                                std::uint64_t run_index) {
  AllocationAnalysisOptions options;
  options.temperature.confidence = values.real("analysis.confidence");
  options.binarize.rule = binarize_rule_from_string(values.text("analysis.binarize"));
  if (values.real("analysis.threshold") > 0)
    options.binarize.threshold = values.real("analysis.threshold");
  if (values.text("analysis.nulls") != "none") {
    NullOptions nulls;
    nulls.model = null_model_from_string(values.text("analysis.nulls"));
    nulls.samples = values.integer("analysis.null_samples");
    std::uint64_t state = static_cast<std::uint64_t>(values.integer("scenario.seed")) ^
                          (0x9E3779B97F4A7C15ULL * (run_index + 1));
    nulls.seed = splitmix64(state);
    nulls.threads = 1;  // runs of a sweep already fill the threads
    options.nulls = nulls;
  }
  options.validate();
  return options;
}

}  // namespace

AllocationAnalysisOptions analysis_options(const ExperimentValues& values,
                                           std::uint64_t run_index) {
  AllocationAnalysisOptions options;
  detail::check_as_keys(values, "analysis",
                        [&] { options = read_analysis_options(values, run_index); },
                        {{"samples", "analysis.null_samples"}});
  return options;
}

}  // namespace allocsim
