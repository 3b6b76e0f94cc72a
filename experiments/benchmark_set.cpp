#include "allocsim/experiments/benchmark_set.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <map>
#include <numeric>
#include <sstream>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/sim/engine.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {
namespace fs = std::filesystem;
namespace {

std::string case_name(long k) {
  char name[32];
  std::snprintf(name, sizeof name, "case-%05ld", k);
  return name;
}

// Whole units drawn from the entropic coupling at epsilon.
Matrix model_allocation(const TransportProblem& problem, double epsilon, long units,
                        std::uint64_t seed, long k) {
  EntropicOptions options;
  options.epsilon = epsilon;
  const EntropicResult coupling = solve_entropic(problem, options);
  if (!coupling.converged()) {
    throw std::runtime_error(case_name(k) + ": the entropic coupling did not converge (" +
                             coupling.message + ")");
  }
  Matrix counts = Matrix::Zero(problem.agents(), problem.partners());
  RandomStream rng(seed, static_cast<std::uint64_t>(k), StreamId::dynamics);
  add_multinomial(rng, units, coupling.coupling.data(), coupling.coupling.size(),
                  coupling.coupling.sum(), counts.data());
  return counts;
}

// Whole units from the price rule at T = epsilon, after its prices settle.
Matrix price_rule_allocation(const TransportProblem& problem, double epsilon, long units,
                             std::uint64_t seed, long k) {
  DynamicsOptions dynamics;
  dynamics.temperature = epsilon;
  dynamics.rounds = 250;
  dynamics.burn_in = 50;
  dynamics.window = 50;
  dynamics.units = std::max(1L, units / (dynamics.rounds - dynamics.burn_in));
  return run_dynamics(problem, dynamics, seed, static_cast<std::uint64_t>(k)).total;
}

ScenarioOptions scenario_for(const BenchmarkOptions& options, const std::string& family) {
  ScenarioOptions scenario;
  scenario.agents = options.agents;
  scenario.partners = options.partners;
  scenario.gains = gains_kind_from_string(family);
  scenario.budgets = MassKind::lognormal;
  scenario.budgets_spread = 0.5;
  scenario.capacities = MassKind::lognormal;
  scenario.capacities_spread = 0.5;
  scenario.seed = options.seed;
  return scenario;
}

double median(std::vector<double> values) {
  if (values.empty()) return std::numeric_limits<double>::quiet_NaN();
  std::sort(values.begin(), values.end());
  const std::size_t h = values.size() / 2;
  return values.size() % 2 ? values[h] : 0.5 * (values[h - 1] + values[h]);
}

std::vector<double> ranks(const std::vector<double>& values) {
  std::vector<std::size_t> order(values.size());
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](auto a, auto b) { return values[a] < values[b]; });
  std::vector<double> rank(values.size());
  for (std::size_t k = 0; k < order.size();) {
    std::size_t end = k;
    while (end + 1 < order.size() && values[order[end + 1]] == values[order[k]]) ++end;
    for (std::size_t t = k; t <= end; ++t) rank[order[t]] = 0.5 * (k + end) + 1;  // ties: mean rank
    k = end + 1;
  }
  return rank;
}

// Spearman's rho: Pearson correlation of the ranks.
double spearman(const std::vector<double>& a, const std::vector<double>& b) {
  if (a.size() < 2) return std::numeric_limits<double>::quiet_NaN();
  const auto ra = ranks(a), rb = ranks(b);
  const double n = static_cast<double>(a.size());
  const double ma = std::accumulate(ra.begin(), ra.end(), 0.0) / n;
  const double mb = std::accumulate(rb.begin(), rb.end(), 0.0) / n;
  double sab = 0, saa = 0, sbb = 0;
  for (std::size_t k = 0; k < ra.size(); ++k) {
    sab += (ra[k] - ma) * (rb[k] - mb);
    saa += (ra[k] - ma) * (ra[k] - ma);
    sbb += (rb[k] - mb) * (rb[k] - mb);
  }
  return sab / std::sqrt(saa * sbb);
}

struct CaseScore {
  std::string family;
  double truth = 0, estimate = 0, relative_error = 0;
  bool answered = false, has_interval = false, covered = false;
};

ScoreSummary summarise(const std::string& group, const std::vector<CaseScore>& cases) {
  ScoreSummary s;
  s.group = group;
  std::vector<double> errors, truths, estimates;
  for (const auto& c : cases) {
    if (group != "all" && c.family != group) continue;
    ++s.cases;
    if (!c.answered) continue;
    ++s.answered;
    errors.push_back(c.relative_error);
    truths.push_back(c.truth);
    estimates.push_back(c.estimate);
    if (c.has_interval) {
      ++s.with_interval;
      s.covered += c.covered;
    }
  }
  const double n = static_cast<double>(errors.size());
  double sum = 0, squares = 0;
  std::vector<double> absolute;
  for (const double e : errors) {
    sum += e;
    squares += e * e;
    absolute.push_back(std::abs(e));
  }
  const double nan = std::numeric_limits<double>::quiet_NaN();
  s.mean_relative_error = n > 0 ? sum / n : nan;
  s.rms_relative_error = n > 0 ? std::sqrt(squares / n) : nan;
  s.median_abs_relative_error = median(absolute);
  s.coverage = s.with_interval ? static_cast<double>(s.covered) / s.with_interval : nan;
  s.rank_correlation = spearman(truths, estimates);
  return s;
}

// The case as CSV files and as one run of the inputs' results file.
void write_inputs(const fs::path& folder, ResultsFile& h5, const std::string& name,
                  const Matrix& allocation, const TransportProblem& problem) {
  const fs::path case_folder = folder / "inputs" / name;
  fs::create_directories(case_folder);
  write_matrix_csv((case_folder / "allocation.csv").string(), allocation);
  write_matrix_csv((case_folder / "gains.csv").string(), problem.gains);
  RunWriter run = h5.create_run(name);
  run.write_scenario(problem);
  run.write_matrix(layout::kTotal, allocation);
}

}  // namespace

void BenchmarkOptions::validate() const {
  if (families.empty()) throw InputError("--families", "name at least one gains family");
  for (const auto& f : families) {
    if (f == "file") throw InputError("--families", "'file' gains cannot be generated");
    gains_kind_from_string(f, "--families");
  }
  if (epsilons.empty()) throw InputError("--epsilon", "give at least one value");
  if (replicates < 1) throw InputError("--replicates", "must be at least 1");
  if (agents < 2 || partners < 2) throw InputError("--agents", "agents and partners must be >= 2");
  if (units < 1) throw InputError("--units", "must be at least 1");
  if (source != "model" && source != "price")
    throw InputError("--source", "'" + source + "' is not one of model, price");
}

long write_benchmark_set(const std::string& folder_name, const BenchmarkOptions& options) {
  options.validate();
  const fs::path folder = folder_name;
  if (fs::exists(folder) && !fs::is_empty(folder)) {
    throw InputError(folder_name, "exists and is not empty; give a new folder");
  }
  fs::create_directories(folder);
  // Inputs first, truth last: a set without truth.csv is unfinished.
  const std::string h5_path = (folder / "inputs.h5").string();
  std::ostringstream truth;
  truth << "case,family,source,true_epsilon,units,agents,partners\n";
  long k = 0;
  {
    ResultsFile h5(h5_path, "", "");
    for (const auto& family : options.families) {
      for (const auto& epsilon_text : options.epsilons) {
        const double epsilon = std::stod(epsilon_text);
        if (!(epsilon > 0)) throw InputError("--epsilon", "values must be > 0");
        for (long r = 0; r < options.replicates; ++r, ++k) {
          const TransportProblem problem =
              make_scenario(scenario_for(options, family), static_cast<std::uint64_t>(k));
          const Matrix allocation =
              options.source == "model"
                  ? model_allocation(problem, epsilon, options.units, options.seed, k)
                  : price_rule_allocation(problem, epsilon, options.units, options.seed, k);
          write_inputs(folder, h5, case_name(k), allocation, problem);
          truth << case_name(k) << "," << family << "," << options.source << ","
                << format_number(epsilon) << "," << format_number(allocation.sum()) << ","
                << options.agents << "," << options.partners << "\n";
        }
      }
    }
    h5.commit();
  }
  AtomicFile truth_file((folder / "truth.csv").string());
  truth_file.stream() << truth.str();
  truth_file.commit();
  return k;
}

ScoreReport score_answers(const CsvTable& truth, const CsvTable& answers) {
  const std::size_t t_case = truth.column("case"), t_family = truth.column("family"),
                    t_epsilon = truth.column("true_epsilon");
  const std::size_t a_case = answers.column("case"), a_epsilon = answers.column("epsilon");
  const bool intervals = answers.has_column("ci_low") && answers.has_column("ci_high");
  std::map<std::string, std::size_t> answer_row;
  for (std::size_t r = 0; r < answers.rows.size(); ++r) {
    if (!answer_row.emplace(answers.rows[r][a_case], r).second) {
      throw InputError(location(answers.path, answers.lines[r]),
                       "answers case " + answers.rows[r][a_case] + " twice");
    }
  }
  std::vector<CaseScore> cases;
  ScoreReport report;
  report.per_case.header = {"case", "family", "true_epsilon", "epsilon", "relative_error", "covered"};
  for (std::size_t r = 0; r < truth.rows.size(); ++r) {
    CaseScore c;
    c.family = truth.rows[r][t_family];
    c.truth = truth.number(r, t_epsilon);
    const auto found = answer_row.find(truth.rows[r][t_case]);
    std::vector<std::string> row = {truth.rows[r][t_case], c.family, format_number(c.truth), "", "", ""};
    if (found != answer_row.end()) {
      const std::size_t a = found->second;
      c.answered = true;
      c.estimate = answers.number(a, a_epsilon);
      c.relative_error = (c.estimate - c.truth) / c.truth;
      row[3] = format_number(c.estimate);
      row[4] = format_number(c.relative_error);
      if (intervals) {
        const std::string& high = answers.rows[a][answers.column("ci_high")];
        const double low = answers.number(a, answers.column("ci_low"));
        const double upper = (high == "inf" || high == "") ? INFINITY : answers.number(a, answers.column("ci_high"));
        c.has_interval = true;
        c.covered = low <= c.truth && c.truth <= upper;
        row[5] = c.covered ? "true" : "false";
      }
      answer_row.erase(found);
    }
    report.per_case.rows.push_back(row);
    cases.push_back(c);
  }
  if (!answer_row.empty()) {
    throw InputError(answers.path, "answers case '" + answer_row.begin()->first +
                                       "', which the truth does not hold (wrong benchmark set?)");
  }
  std::vector<std::string> families;
  for (const auto& c : cases)
    if (std::find(families.begin(), families.end(), c.family) == families.end())
      families.push_back(c.family);
  for (const auto& f : families) report.summaries.push_back(summarise(f, cases));
  report.summaries.push_back(summarise("all", cases));
  return report;
}

JsonObject ScoreReport::json() const {
  JsonObject json;
  for (const auto& s : summaries) {
    JsonObject group;
    group.add("cases", static_cast<long long>(s.cases)).add("answered", static_cast<long long>(s.answered))
        .add("mean_relative_error", s.mean_relative_error)
        .add("rms_relative_error", s.rms_relative_error)
        .add("median_abs_relative_error", s.median_abs_relative_error)
        .add("coverage", s.coverage).add("with_interval", static_cast<long long>(s.with_interval))
        .add("rank_correlation", s.rank_correlation);
    json.add(s.group, group);
  }
  return json;
}

std::string ScoreReport::text() const {
  std::ostringstream out;
  out << "group             cases  answered  bias (mean rel.)  RMS rel.  median |rel.|  coverage  Spearman\n";
  for (const auto& s : summaries) {
    char line[200];
    std::snprintf(line, sizeof line, "%-16s  %5ld  %8ld  %+16.4f  %8.4f  %13.4f  %8.3f  %8.3f\n",
                  s.group.c_str(), s.cases, s.answered, s.mean_relative_error, s.rms_relative_error,
                  s.median_abs_relative_error, s.coverage, s.rank_correlation);
    out << line;
  }
  return out.str();
}

}  // namespace allocsim
