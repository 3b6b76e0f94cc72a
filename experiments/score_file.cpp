#include <cmath>

#include "allocsim/experiments/benchmark_score.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"

namespace allocsim {
namespace {

double flag(bool known, bool value) { return known ? (value ? 1.0 : 0.0) : ScoredCase::kNone; }

}  // namespace

void write_score_file(const std::string& path, const ScoreReport& report,
                      const std::string& description, const std::string& tool_version) {
  SummaryTable table;
  std::vector<std::string> names, families, sources, answers;
  std::vector<double> misspecified, truth, units, agents, partners, epsilon_band, units_band,
      estimate, low, high, relative_error, covered;
  for (const ScoredCase& c : report.cases) {
    names.push_back(c.name);
    families.push_back(c.family);
    sources.push_back(c.source);
    answers.push_back(to_string(c.answer));
    misspecified.push_back(flag(true, c.misspecified));
    truth.push_back(c.truth);
    units.push_back(c.units);
    agents.push_back(static_cast<double>(c.agents));
    partners.push_back(static_cast<double>(c.partners));
    epsilon_band.push_back(c.epsilon_band);
    units_band.push_back(c.units_band > 0 ? c.units_band : ScoredCase::kNone);
    estimate.push_back(c.estimate);
    low.push_back(c.ci_low);
    high.push_back(c.ci_high);
    relative_error.push_back(c.relative_error);
    covered.push_back(flag(c.has_interval, c.covered));
  }
  table.texts = {{layout::kCaseColumn, names},
                 {layout::kFamilyColumn, families},
                 {layout::kSourceColumn, sources},
                 {layout::kAnswerColumn, answers}};
  table.numbers = {{layout::kMisspecifiedColumn, misspecified},
                   {layout::kTrueEpsilonColumn, truth},
                   {layout::kUnitsColumn, units},
                   {layout::kAgentsColumn, agents},
                   {layout::kPartnersColumn, partners},
                   {layout::kEpsilonBandColumn, epsilon_band},
                   {layout::kUnitsBandColumn, units_band},
                   {layout::kEpsilon, estimate},
                   {layout::kEpsilonCiLow, low},
                   {layout::kEpsilonCiHigh, high},
                   {layout::kRelativeErrorColumn, relative_error},
                   {layout::kCoveredColumn, covered}};
  ResultsFile file(path, description, tool_version);
  file.write_summary(table);
  file.commit();
}

}  // namespace allocsim
