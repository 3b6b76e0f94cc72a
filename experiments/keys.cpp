#include "allocsim/experiments/keys.hpp"
#include "allocsim/core/edit_distance.hpp"

#include <algorithm>
#include <boost/program_options.hpp>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/analysis/null_models.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/sim/rules.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {
namespace {

namespace po = boost::program_options;

ExperimentKey make_key(std::string name, KeyKind kind, std::string value, std::string description) {
  ExperimentKey key;
  key.name = std::move(name);
  key.kind = kind;
  key.default_value = std::move(value);
  key.description = std::move(description);
  return key;
}

ExperimentKey integer_key(std::string name, std::string value, std::string description,
                          double lowest) {
  ExperimentKey key =
      make_key(std::move(name), KeyKind::integer, std::move(value), std::move(description));
  key.lowest = lowest;
  key.has_lowest = true;
  return key;
}

ExperimentKey real_key(std::string name, std::string value, std::string description, double lowest,
                       bool lowest_open, double highest = 0, bool has_highest = false) {
  ExperimentKey key =
      make_key(std::move(name), KeyKind::real, std::move(value), std::move(description));
  key.lowest = lowest;
  key.has_lowest = true;
  key.lowest_open = lowest_open;
  key.highest = highest;
  key.has_highest = has_highest;
  return key;
}

ExperimentKey word_key(std::string name, std::string value, std::string description,
                       std::vector<std::string> words) {
  ExperimentKey key =
      make_key(std::move(name), KeyKind::word, std::move(value), std::move(description));
  key.words = std::move(words);
  return key;
}

ExperimentKey path_key(std::string name, std::string description) {
  return make_key(std::move(name), KeyKind::path, "", std::move(description));
}

ExperimentKey boolean_key(std::string name, std::string value, std::string description) {
  return make_key(std::move(name), KeyKind::boolean, std::move(value), std::move(description));
}

std::vector<ExperimentKey> build_keys() {
  const std::vector<std::string> masses = mass_kind_words();
  std::vector<std::string> nulls = null_model_words();
  nulls.insert(nulls.begin(), "none");
  return {
      integer_key("scenario.agents", "20", "number of agents (rows)", 1),
      integer_key("scenario.partners", "30", "number of partners (columns)", 1),
      word_key("scenario.gains", "trait-distance", "how the gains are generated",
               gains_kind_words()),
      real_key("scenario.gains_scale", "1", "factor on every generated gain", 0, true),
      real_key("scenario.gains_exponent", "2", "p of trait-distance gains -|x_i - y_j|^p", 0, true),
      integer_key("scenario.gains_rank", "2", "number of latent features of features gains", 1),
      path_key("scenario.gains_file", "CSV gain matrix for gains = file (agents x partners)"),
      word_key("scenario.budgets", "uniform", "how the agents' budgets are generated", masses),
      real_key("scenario.budgets_exponent", "1", "Zipf exponent of zipf budgets", 0, false),
      real_key("scenario.budgets_spread", "1", "sigma of lognormal budgets", 0, false),
      path_key("scenario.budgets_file", "CSV budgets for budgets = file (one per agent)"),
      word_key("scenario.capacities", "uniform", "how the partners' capacities are generated",
               masses),
      real_key("scenario.capacities_exponent", "1", "Zipf exponent of zipf capacities", 0, false),
      real_key("scenario.capacities_spread", "1", "sigma of lognormal capacities", 0, false),
      path_key("scenario.capacities_file",
               "CSV capacities for capacities = file (one per partner)"),
      word_key("scenario.access", "full", "which agent may use which partner", access_kind_words()),
      real_key("scenario.access_density", "0.5", "share of allowed pairs of random access", 0, true,
               1, true),
      path_key("scenario.access_file", "CSV 0/1 matrix for access = file (agents x partners)"),
      integer_key("scenario.seed", "1", "experiment seed of every random draw", 0),
      word_key("dynamics.rule", "price", "choice-and-capacity mechanism", rule_kind_words()),
      real_key("dynamics.temperature", "0.1", "choice temperature T, in gain units", 0, true),
      integer_key("dynamics.rounds", "500", "rounds to play", 1),
      integer_key("dynamics.units", "10000", "budget units spent per round by all agents together",
                  1),
      integer_key("dynamics.burn_in", "100",
                  "first rounds left out of the cumulative allocation (< rounds)", 0),
      integer_key("dynamics.window", "50", "rounds per allocation snapshot", 1),
      real_key("dynamics.price_step", "0.5", "eta of the price update (0 = fixed prices)", 0, false,
               1, true),
      boolean_key("dynamics.mean_field", "false",
                  "expected flows instead of sampled units (price and gumbel)"),
      real_key("dynamics.learning_step", "0.1", "alpha of learn's estimate update", 0, true, 1,
               true),
      real_key("dynamics.reward_noise", "0", "sigma of learn's reward noise, in gain units", 0,
               false),
      boolean_key("analysis.enabled", "false",
                  "analyse each run: temperature estimate, distance to the exact and entropic "
                  "couplings, structure"),
      real_key("analysis.confidence", "0.95", "level of the temperature interval", 0, true, 1,
               true),
      word_key("analysis.binarize", "positive", "link rule of the structure metrics",
               binarize_rule_words()),
      real_key("analysis.threshold", "0", "threshold of the link rule (0 = the rule's own)", 0,
               false),
      word_key("analysis.nulls", "none", "null model NODF (and WNODF) are compared with", nulls),
      integer_key("analysis.null_samples", "200", "size of the null ensemble", 2),
      word_key("analysis.latent_rank", "none",
               "reconstruct the gains from the allocation alone: the latent association model "
               "RC(K) with K dimensions, or auto (K by BIC up to analysis.max_latent_rank); "
               "needs analysis.enabled",
               {"none", "auto", "1", "2", "3", "4", "5", "6", "7", "8"}),
      integer_key("analysis.max_latent_rank", "3",
                  "largest K that analysis.latent_rank = auto tries", 1),
      boolean_key("analysis.trait_features", "false",
                  "reconstruct the gains from the scenario's own traits (rank-product, "
                  "trait-distance, features gains): fit gains/epsilon = sum_k beta_k F_k to their "
                  "trait-matching features; needs analysis.enabled"),
      make_key("output.file", KeyKind::path, "results.h5", "results file (HDF5) to write"),
  };
}

// "exp.ini:12: dynamics.rule", or "--dynamics.rule" for the command line.
std::string key_place(const std::string& where, const std::string& key) {
  if (where.empty()) return key;
  if (where == "--" + key) return where;
  return where + ": " + key;
}

std::string format_bound(double value) {
  std::ostringstream out;
  out << value;
  return out.str();
}

bool parse_real(const std::string& text, double& value) {
  if (text.empty()) return false;
  char* end = nullptr;
  errno = 0;
  value = std::strtod(text.c_str(), &end);
  return end == text.c_str() + text.size() && errno == 0 && std::isfinite(value);
}

// Checks `text` against the key; returns the normalised text or throws.
std::string checked_value(const ExperimentKey& key, const std::string& text,
                          const std::string& where) {
  const std::string place = key_place(where, key.name);
  auto fail = [&](const std::string& why) {
    throw InputError(
        place, "'" + text + "' is not valid: " + why + " (expected " + key.valid_values() + ")");
  };
  double number = 0;
  switch (key.kind) {
    case KeyKind::word:
      if (std::find(key.words.begin(), key.words.end(), text) == key.words.end()) {
        fail("unknown word");
      }
      return text;
    case KeyKind::boolean:
      if (text == "true" || text == "yes" || text == "1") return "true";
      if (text == "false" || text == "no" || text == "0") return "false";
      fail("not a truth value");
      break;
    case KeyKind::path:
      return text;
    case KeyKind::integer:
    case KeyKind::real:
      if (!parse_real(text, number)) fail("not a number");
      if (key.kind == KeyKind::integer &&
          (number != std::floor(number) || std::abs(number) > 9e15)) {
        fail("not a whole number");
      }
      if (key.has_lowest && (key.lowest_open ? !(number > key.lowest) : !(number >= key.lowest))) {
        fail("out of range");
      }
      if (key.has_highest && !(number <= key.highest)) fail("out of range");
      return text;
  }
  return text;
}

std::string trim(const std::string& s) {
  const auto begin = s.find_first_not_of(" \t\r");
  if (begin == std::string::npos) return "";
  const auto end = s.find_last_not_of(" \t\r");
  return s.substr(begin, end - begin + 1);
}

// Where each "section.key" of an INI text sits (line from 1), and the first
// line that is neither blank, comment, section nor key = value (0 if none).
struct IniLines {
  std::map<std::string, std::vector<long>> key_lines;
  long first_bad_line = 0;
};

IniLines locate_ini_lines(const std::string& text) {
  IniLines result;
  std::istringstream in(text);
  std::string line, section;
  for (long number = 1; std::getline(in, line); ++number) {
    const std::string body = trim(line.substr(0, line.find('#')));
    if (body.empty()) continue;
    if (body.front() == '[' && body.back() == ']') {
      section = trim(body.substr(1, body.size() - 2));
      continue;
    }
    const auto equals = body.find('=');
    if (equals == std::string::npos || trim(body.substr(0, equals)).empty()) {
      if (!result.first_bad_line) result.first_bad_line = number;
      continue;
    }
    const std::string key = trim(body.substr(0, equals));
    result.key_lines[section.empty() ? key : section + "." + key].push_back(number);
  }
  return result;
}

}  // namespace

std::string ExperimentKey::valid_values() const {
  switch (kind) {
    case KeyKind::word: {
      std::string list;
      for (const auto& w : words) list += (list.empty() ? "" : "|") + w;
      return "one of " + list;
    }
    case KeyKind::boolean:
      return "true|false";
    case KeyKind::path:
      return "a file name";
    case KeyKind::integer:
    case KeyKind::real: {
      std::string text = kind == KeyKind::integer ? "a whole number" : "a number";
      if (has_lowest && has_highest) {
        text += std::string(" in ") + (lowest_open ? "(" : "[") + format_bound(lowest) + ", " +
                format_bound(highest) + "]";
      } else if (has_lowest) {
        text += (lowest_open ? " > " : " >= ") + format_bound(lowest);
      }
      return text;
    }
  }
  return "";
}

const std::vector<ExperimentKey>& experiment_keys() {
  static const std::vector<ExperimentKey> keys = build_keys();
  return keys;
}

const ExperimentKey* find_experiment_key(const std::string& name) {
  for (const auto& key : experiment_keys()) {
    if (key.name == name) return &key;
  }
  return nullptr;
}

std::string key_list(const std::string& section, const std::vector<std::string>& fields) {
  std::string list;
  for (const auto& field : fields) list += (list.empty() ? "" : ", ") + section + "." + field;
  return list;
}

std::string nearest_experiment_key(const std::string& name) {
  std::string best;
  std::size_t best_distance = std::string::npos;
  for (const auto& key : experiment_keys()) {
    const std::string short_name = key.name.substr(key.name.find('.') + 1);
    const std::size_t d = std::min(edit_distance(name, key.name), edit_distance(name, short_name));
    if (d < best_distance) {
      best_distance = d;
      best = key.name;
    }
  }
  return best;
}

ExperimentValues::ExperimentValues() {
  for (const auto& key : experiment_keys()) {
    entries_[key.name] = Entry{key.default_value, "default", false};
  }
}

void ExperimentValues::set(const std::string& key, const std::string& text,
                           const std::string& where) {
  const ExperimentKey* spec = find_experiment_key(key);
  if (!spec) {
    throw InputError(key_place(where, key),
                     "unknown key (did you mean " + nearest_experiment_key(key) + "?)");
  }
  entries_[key] = Entry{checked_value(*spec, trim(text), where), where, true};
}

const ExperimentValues::Entry& ExperimentValues::entry(const std::string& key) const {
  const auto found = entries_.find(key);
  if (found == entries_.end()) throw std::logic_error("no experiment key " + key);
  return found->second;
}

const std::string& ExperimentValues::text(const std::string& key) const { return entry(key).text; }
double ExperimentValues::real(const std::string& key) const { return std::stod(text(key)); }
long long ExperimentValues::integer(const std::string& key) const {
  return static_cast<long long>(std::stod(text(key)));
}
bool ExperimentValues::boolean(const std::string& key) const { return text(key) == "true"; }
bool ExperimentValues::given(const std::string& key) const { return entry(key).given; }
const std::string& ExperimentValues::where(const std::string& key) const {
  return entry(key).where;
}

std::string ExperimentValues::to_ini() const {
  std::ostringstream out;
  std::string section;
  for (const auto& key : experiment_keys()) {
    const auto dot = key.name.find('.');
    const std::string key_section = key.name.substr(0, dot);
    if (key_section != section) {
      out << (section.empty() ? "" : "\n") << "[" << key_section << "]\n";
      section = key_section;
    }
    // Defaults are written as comments, so that a rerun of this text takes
    // the same path (e.g. agents taken from a gains file) as the original.
    out << (given(key.name) ? "" : "# ") << key.name.substr(dot + 1) << " = " << text(key.name)
        << "\n";
  }
  return out.str();
}

void add_sweep_line(SweepSection& sweep, const std::string& key, const std::string& text,
                    const std::string& where) {
  const std::string value = trim(text);
  const std::string place = key_place(where, "sweep." + key);
  if (key == "combine") {
    sweep.combine = sweep_combine_from_string(value, place);
    return;
  }
  if (key == "replicates") {
    char* end = nullptr;
    const long replicates = std::strtol(value.c_str(), &end, 10);
    if (value.empty() || *end != '\0' || replicates < 1) {
      throw InputError(place, "'" + value + "' is not a whole number >= 1");
    }
    sweep.replicates = replicates;
    return;
  }
  if (!find_experiment_key(key)) {
    throw InputError(place, "an axis must be named by an experiment key (did you mean sweep." +
                                nearest_experiment_key(key) + "?); or use combine, replicates");
  }
  SweepAxis axis{key, expand_sweep_values(value, place), where};
  ExperimentValues probe;
  for (const auto& v : axis.values) probe.set(key, v, where);
  sweep.axes.push_back(std::move(axis));
}

void read_experiment_file(const std::string& path, ExperimentValues& values, SweepSection* sweep) {
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) {
    throw InputError(path, "is a directory, not an experiment file");
  }
  std::ifstream in(path);
  if (!in) throw InputError(path, "cannot be read (does the file exist?)");
  std::stringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw InputError(path, "cannot be read");
  std::string text = buffer.str();
  // A UTF-8 byte-order mark (as some editors write) is not part of the first line.
  if (text.rfind("\xEF\xBB\xBF", 0) == 0) text.erase(0, 3);
  const IniLines lines = locate_ini_lines(text);

  po::options_description known;
  for (const auto& key : experiment_keys()) {
    known.add_options()(key.name.c_str(), po::value<std::string>());
  }
  po::parsed_options parsed(&known);
  try {
    std::istringstream stream(text);
    parsed = po::parse_config_file(stream, known, /*allow_unregistered=*/true);
  } catch (const po::error& e) {
    throw InputError(location(path, lines.first_bad_line),
                     std::string("not an INI line: expected 'key = value', [section] or "
                                 "# comment (") +
                         e.what() + ")");
  }
  for (const auto& option : parsed.options) {
    const auto found = lines.key_lines.find(option.string_key);
    const std::vector<long> at =
        found == lines.key_lines.end() ? std::vector<long>{} : found->second;
    const std::string where = location(path, at.empty() ? 0 : at.front());
    if (at.size() > 1) {
      throw InputError(location(path, at[1]) + ": " + option.string_key,
                       "given twice (first at line " + std::to_string(at[0]) + ")");
    }
    const std::string value = option.value.empty() ? "" : option.value.front();
    if (option.string_key.rfind("sweep.", 0) == 0) {
      if (!sweep) {
        throw InputError(key_place(where, option.string_key),
                         "a [sweep] section runs many points: use 'allocsim run " + path + "'");
      }
      add_sweep_line(*sweep, option.string_key.substr(6), value, where);
      continue;
    }
    values.set(option.string_key, value, where);
  }
}

std::string experiment_keys_help() {
  std::ostringstream out;
  out << "experiment keys (in a --config file as [section] key = value, or as "
         "--section.key value):\n";
  for (const auto& key : experiment_keys()) {
    out << "  --" << key.name << " (" << key.valid_values();
    if (!key.default_value.empty()) out << "; default " << key.default_value;
    out << ")\n      " << key.description << "\n";
  }
  return out.str();
}

}  // namespace allocsim
