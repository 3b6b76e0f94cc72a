#include "allocsim/experiments/benchmark_set.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <numeric>
#include <sstream>
#include <stdexcept>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {
namespace fs = std::filesystem;
namespace {

constexpr std::uint64_t kOrderSubstream = 1;  // design stream of run 0: the permutation

long total_cases(const BenchmarkOptions& o, long cells) {
  return o.cases > 0 ? o.cases : cells * o.replicates;
}

long design_cells(const BenchmarkOptions& o) {
  const long grid = o.epsilon.drawn() ? 1 : static_cast<long>(o.epsilon.values.size());
  return static_cast<long>(o.families.size() * o.sources.size()) * grid;
}

std::string case_name(long position, long total) {
  int digits = 4;
  for (long t = total - 1; t >= 10000; t /= 10) ++digits;
  char name[32];
  std::snprintf(name, sizeof name, "case-%0*ld", digits, position);
  return name;
}

// Fisher-Yates on 0..total-1: position[k] of design case k.
std::vector<long> seeded_positions(long total, std::uint64_t seed) {
  std::vector<long> order(static_cast<std::size_t>(total));
  std::iota(order.begin(), order.end(), 0L);
  RandomStream rng(seed, 0, StreamId::design, kOrderSubstream);
  for (long k = total - 1; k > 0; --k) {
    std::swap(order[static_cast<std::size_t>(k)],
              order[static_cast<std::size_t>(rng.below(static_cast<std::uint64_t>(k + 1)))]);
  }
  std::vector<long> position(order.size());
  for (long p = 0; p < total; ++p)
    position[static_cast<std::size_t>(order[static_cast<std::size_t>(p)])] = p;
  return position;
}

ScenarioOptions scenario_of(const BenchmarkCase& c, std::uint64_t seed) {
  ScenarioOptions s;
  s.agents = c.agents;
  s.partners = c.partners;
  s.gains = gains_kind_from_string(c.family);
  s.budgets = c.budgets.kind;
  s.budgets_exponent = c.budgets.parameter;
  s.budgets_spread = c.budgets.parameter;
  s.capacities = c.capacities.kind;
  s.capacities_exponent = c.capacities.parameter;
  s.capacities_spread = c.capacities.parameter;
  s.seed = seed;
  return s;
}

std::string truth_header() {
  return "case,family,source,misspecified,true_epsilon,units,agents,partners,budgets,capacities\n";
}

std::string readme_text(long cases, bool truth_here) {
  std::ostringstream out;
  out << "A benchmark set of " << cases << " allocations with a known transport temperature,\n"
      << "written by `allocsim synth`. Estimate the transport temperature epsilon of each\n"
      << "case from what this folder holds; the true values are kept apart.\n\n"
      << "Cases are named case-0000, case-0001, ...; the names and their order are a random\n"
      << "permutation and say nothing about a case. Cases differ in gains family, size\n"
      << "(agents x partners), number of units, budgets and capacities, and in how the\n"
      << "allocation was made.\n\n"
      << "Files\n\n"
      << "inputs/<case>/allocation.csv  the allocation: agents (rows) x partners (columns),\n"
      << "                              whole units sent from agent i to partner j;\n"
      << "                              numbers separated by commas, no labels\n"
      << "inputs/<case>/gains.csv       gains_ij, what agent i earns per unit sent to partner j\n"
      << "                              (higher is better); epsilon is in these units\n"
      << "inputs/<case>/budgets.csv     budget of each agent, one value per line (total 1)\n"
      << "inputs/<case>/capacities.csv  capacity of each partner, one value per line (total 1)\n"
      << "inputs.h5                     the same, as an allocsim results file (HDF5, readable\n"
      << "                              with h5py): /runs/<case>/allocation/total,\n"
      << "                              /runs/<case>/scenario/gains, budgets, capacities;\n"
      << "                              attributes of /runs/<case>: status, scenario.agents,\n"
      << "                              scenario.partners, units_after_burn_in (the units of\n"
      << "                              the allocation). `allocsim analyze inputs.h5 --json`\n"
      << "                              and `allocsim inspect inputs.h5` read it.\n"
      << "README.txt                    this description\n";
  if (truth_here) {
    out << "truth.csv                     the answer key (see below): remove it before handing\n"
        << "                              the folder over, or write the set with --truth-dir\n";
  }
  out << "\nAnswers: a CSV file with a header row and the columns\n\n"
      << "case      the case name\n"
      << "epsilon   the estimate (gain units, >= 0; inf when no finite temperature explains the\n"
      << "          allocation); empty to decline the case\n"
      << "ci_low    (optional) lower end of an interval for epsilon\n"
      << "ci_high   (optional) upper end; inf for an unbounded interval\n\n"
      << "A case left out of the answers, or declined, counts as unanswered (not as an\n"
      << "error). Score with\n"
      << "  allocsim score --truth truth.csv --answers answers.csv [--out scores.h5]\n\n"
      << "truth.csv columns: case; family (gains family); source (model: a multinomial\n"
      << "sample from the entropic coupling at epsilon; price, gumbel, queue, learn: the\n"
      << "sandbox's rules at choice temperature epsilon; mixed-noise: random utility with\n"
      << "normal shocks, a probit choice); misspecified (true when the entropic coupling is\n"
      << "not the mean of the source); true_epsilon; units (placed); agents; partners;\n"
      << "budgets and capacities (the law each was drawn from).\n";
  return out.str();
}

// A folder that must be new or empty; "" when fine.
void require_new_folder(const fs::path& folder, const std::string& option) {
  if (fs::exists(folder) && (!fs::is_directory(folder) || !fs::is_empty(folder))) {
    throw InputError(option,
                     folder.string() + " exists and is not an empty folder; give a new folder");
  }
}

bool is_inside(const fs::path& inner, const fs::path& outer) {
  const fs::path a = fs::weakly_canonical(inner), b = fs::weakly_canonical(outer);
  auto ai = a.begin(), bi = b.begin();
  for (; bi != b.end() && !bi->empty(); ++ai, ++bi) {
    if (ai == a.end() || *ai != *bi) return false;
  }
  return true;
}

void write_vector_lines(const fs::path& path, const Vector& values) {
  AtomicFile file(path.string());
  for (long k = 0; k < values.size(); ++k) file.stream() << format_number(values[k]) << "\n";
  file.commit();
}

// The case as one run group of inputs.h5 (the simulated-run layout); its
// attributes tell nothing of the design.
void write_case_run(ResultsFile& file, const BenchmarkCase& c, const TransportProblem& problem,
                    const Matrix& allocation) {
  RunWriter run = file.create_run(c.name);
  run.set_text(layout::kStatus, layout::kStatusComplete);
  run.set_integer("scenario.agents", c.agents);
  run.set_integer("scenario.partners", c.partners);
  run.set_number(layout::kUnitsAfterBurnIn, allocation.sum());
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
  if (sources.empty()) throw InputError("--source", "name at least one source");
  if (epsilon.kind == NumberLaw::Kind::grid && epsilon.values.empty())
    throw InputError("--epsilon", "give at least one value");
  if (units.kind == NumberLaw::Kind::grid && units.values.empty())
    throw InputError("--units", "give at least one value");
  const double least_units =
      units.drawn() ? units.low : *std::min_element(units.values.begin(), units.values.end());
  if (least_units < 1) throw InputError("--units", "'" + units.text + "' allows fewer than 1 unit");
  // Counts are whole numbers held exactly (doubles are exact to 2^53).
  constexpr double kMostUnits = 1e15;
  const double most_units =
      units.drawn() ? units.high : *std::max_element(units.values.begin(), units.values.end());
  if (most_units > kMostUnits)
    throw InputError("--units", "'" + units.text + "' allows more than 1e15 units per case");
  if (budgets.empty()) throw InputError("--budgets", "name at least one law");
  if (capacities.empty()) throw InputError("--capacities", "name at least one law");
  if (cases < 0) throw InputError("--cases", "must be >= 0 (0: one per design cell and replicate)");
  if (replicates < 1) throw InputError("--replicates", "must be at least 1");
  if (total_cases(*this, design_cells(*this)) > 1000000)
    throw InputError(cases > 0 ? "--cases" : "--replicates", "more than a million cases");
  // Dense agents x partners matrices one case holds at once at the largest
  // shape: gains, the allocation, and a simulation's (8) or the entropic
  // coupling's working matrices (an estimate).
  constexpr double kCaseMatrices = 10;
  require_memory(dense_matrix_bytes(static_cast<double>(shape.agents.high),
                                    static_cast<double>(shape.partners.high), kCaseMatrices),
                 "a case of " + std::to_string(shape.agents.high) + " x " +
                     std::to_string(shape.partners.high) + " cells",
                 shape.where, "use fewer agents or partners");
}

std::vector<BenchmarkCase> plan_benchmark_set(const BenchmarkOptions& options) {
  options.validate();
  const long cells = design_cells(options);
  const long total = total_cases(options, cells);
  const long families = static_cast<long>(options.families.size());
  const long sources = static_cast<long>(options.sources.size());
  const std::vector<long> position = seeded_positions(total, options.seed);
  std::vector<BenchmarkCase> cases(static_cast<std::size_t>(total));
  for (long k = 0; k < total; ++k) {
    const long cell = k % cells;
    RandomStream rng(options.seed, static_cast<std::uint64_t>(k), StreamId::design);
    BenchmarkCase c;
    c.design_index = k;
    c.name = case_name(position[static_cast<std::size_t>(k)], total);
    c.family = options.families[static_cast<std::size_t>(cell % families)];
    c.source = options.sources[static_cast<std::size_t>((cell / families) % sources)];
    c.epsilon = options.epsilon.value(cell / (families * sources), rng);
    c.units = std::max(1L, std::lround(options.units.value(k / cells, rng)));
    c.agents = options.shape.agents.draw(rng);
    c.partners = options.shape.partners.draw(rng);
    c.budgets = options.budgets[static_cast<std::size_t>(rng.below(options.budgets.size()))];
    c.capacities =
        options.capacities[static_cast<std::size_t>(rng.below(options.capacities.size()))];
    cases[static_cast<std::size_t>(position[static_cast<std::size_t>(k)])] = c;
  }
  return cases;
}

long write_benchmark_set(const std::string& folder_name, const std::string& truth_folder_name,
                         const BenchmarkOptions& options, void (*progress)(long, long)) {
  const std::vector<BenchmarkCase> cases = plan_benchmark_set(options);
  const fs::path folder = folder_name;
  const fs::path truth_folder = truth_folder_name.empty() ? folder : fs::path(truth_folder_name);
  const bool truth_apart = !truth_folder_name.empty();
  require_new_folder(folder, "--out-dir");
  if (truth_apart) {
    if (is_inside(truth_folder, folder))
      throw InputError("--truth-dir", truth_folder_name + " lies inside the set's folder " +
                                          folder_name +
                                          "; the truth must stay apart from the inputs");
    if (fs::exists(truth_folder / "truth.csv"))
      throw InputError("--truth-dir",
                       (truth_folder / "truth.csv").string() + " exists; give another folder");
  }
  // Everything goes to a temporary folder renamed onto the target at the end.
  const fs::path temporary = temporary_name_for(fs::absolute(folder).lexically_normal().string());
  std::error_code error;
  fs::create_directories(temporary, error);
  if (error)
    throw InputError("--out-dir", folder_name + " cannot be created (" + error.message() + ")");
  std::ostringstream truth;
  truth << truth_header();
  try {
    {
      ResultsFile h5((temporary / "inputs.h5").string(),
                     "# inputs of a benchmark set written by allocsim synth: " +
                         std::to_string(cases.size()) + " cases; the truth is kept apart\n",
                     options.tool_version);
      long done = 0;
      for (const BenchmarkCase& c : cases) {
        const TransportProblem problem =
            make_scenario(scenario_of(c, options.seed), static_cast<std::uint64_t>(c.design_index));
        Matrix allocation;
        try {
          allocation =
              draw_benchmark_allocation(problem, c.source, c.epsilon, c.units, options.seed,
                                        static_cast<std::uint64_t>(c.design_index));
        } catch (const std::runtime_error& e) {
          throw std::runtime_error(c.name + ": " + e.what());
        }
        const fs::path case_folder = temporary / "inputs" / c.name;
        fs::create_directories(case_folder);
        write_matrix_csv((case_folder / "allocation.csv").string(), allocation);
        write_matrix_csv((case_folder / "gains.csv").string(), problem.gains);
        write_vector_lines(case_folder / "budgets.csv", problem.budgets);
        write_vector_lines(case_folder / "capacities.csv", problem.capacities);
        write_case_run(h5, c, problem, allocation);
        truth << c.name << "," << c.family << "," << to_string(c.source) << ","
              << (is_misspecified(c.source) ? "true" : "false") << "," << format_number(c.epsilon)
              << "," << format_number(allocation.sum()) << "," << c.agents << "," << c.partners
              << "," << c.budgets.text() << "," << c.capacities.text() << "\n";
        if (progress) progress(++done, static_cast<long>(cases.size()));
      }
      h5.commit();
    }
    {
      std::ofstream readme(temporary / "README.txt");
      readme << readme_text(static_cast<long>(cases.size()), !truth_apart);
      if (!readme) throw InputError("--out-dir", "README.txt cannot be written");
    }
    if (fs::exists(folder)) fs::remove(folder);  // empty (checked above)
    fs::rename(temporary, folder);
  } catch (...) {
    fs::remove_all(temporary, error);
    throw;
  }
  fs::create_directories(truth_folder, error);
  if (error)
    throw InputError("--truth-dir",
                     truth_folder_name + " cannot be created (" + error.message() + ")");
  AtomicFile truth_file((truth_folder / "truth.csv").string());
  truth_file.stream() << truth.str();
  truth_file.commit();
  return static_cast<long>(cases.size());
}

}  // namespace allocsim
