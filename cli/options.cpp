#include "options.hpp"

#include <algorithm>
#include <iostream>
#include <vector>

#include "allocsim/core/edit_distance.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/keys.hpp"

namespace allocsim::cli {
namespace {

// The option of `options` nearest to `name` (also by its part after the
// first '.', so "temperature" finds "dynamics.temperature").
std::string nearest_option(const po::options_description& options, const std::string& name) {
  std::string best;
  std::size_t best_distance = std::string::npos;
  for (const auto& option : options.options()) {
    const std::string& candidate = option->long_name();
    if (candidate.empty()) continue;
    std::size_t d = edit_distance(name, candidate);
    const auto dot = candidate.find('.');
    if (dot != std::string::npos) d = std::min(d, edit_distance(name, candidate.substr(dot + 1)));
    if (d < best_distance) {
      best_distance = d;
      best = candidate;
    }
  }
  return best;
}

// Refuses an option the command does not know, naming the nearest one,
// before the parser reads its value as a stray argument.
void refuse_unknown_options(const Arguments& args, const po::options_description& options) {
  for (const std::string& token : args) {
    if (token.size() <= 2 || token.compare(0, 2, "--") != 0) continue;
    const std::string name = token.substr(2, token.find('=') - 2);
    try {
      if (options.find_nothrow(name, true)) continue;  // also an unambiguous abbreviation
    } catch (const po::error&) {
      continue;  // an ambiguous abbreviation: the parser says so
    }
    throw InputError("--" + name,
                     "unknown option (did you mean --" + nearest_option(options, name) + "?)");
  }
}

}  // namespace

bool parse_or_help(const Arguments& args, const po::options_description& options,
                   const po::positional_options_description& positional, po::variables_map& vm,
                   const std::string& command, const std::string& usage) {
  po::options_description all(options);
  all.add_options()("help,h", "show this help");
  try {
    po::store(po::command_line_parser(args).options(all).positional(positional).run(), vm);
    if (vm.count("help")) {
      std::cout << "usage: allocsim " << command << " " << usage << "\n\n" << all << "\n";
      return false;
    }
    po::notify(vm);
  } catch (const po::error& e) {
    throw InputError("allocsim " + command,
                     std::string(e.what()) + " (see 'allocsim " + command + " --help')");
  }
  return true;
}

void add_experiment_key_options(po::options_description& options) {
  for (const auto& key : experiment_keys()) {
    options.add_options()(key.name.c_str(), po::value<std::string>(), key.description.c_str());
  }
}

po::variables_map parse_with_experiment_keys(const Arguments& args,
                                             const po::options_description& options,
                                             const po::positional_options_description* positional,
                                             const std::string& command) {
  refuse_unknown_options(args, options);
  po::variables_map vm;
  try {
    po::command_line_parser parser(args);
    parser.options(options).allow_unregistered();
    if (positional) parser.positional(*positional);
    const po::parsed_options parsed = parser.run();
    for (const auto& option : parsed.options) {
      const bool stray_positional = option.position_key >= 0 && !positional;
      if (!option.unregistered && !stray_positional) continue;
      const std::string given =
          option.original_tokens.empty() ? option.string_key : option.original_tokens.front();
      if (stray_positional || given.rfind("-", 0) != 0) {
        throw InputError("allocsim " + command, "unexpected argument '" + given +
                                                    "' (see 'allocsim " + command + " --help')");
      }
      const std::string name = given.substr(given.find_first_not_of('-'));
      throw InputError(given, "unknown option (did you mean --" +
                                  nearest_experiment_key(name.substr(0, name.find('='))) + "?)");
    }
    po::store(parsed, vm);
    po::notify(vm);
  } catch (const po::error& e) {
    throw InputError("allocsim " + command,
                     std::string(e.what()) + " (see 'allocsim " + command + " --help')");
  }
  return vm;
}

int checked_threads(const po::variables_map& vm) {
  const int threads = vm["threads"].as<int>();
  if (threads < 1 || threads > kMaxThreads) {
    throw InputError("--threads", std::to_string(threads) +
                                      " is not allowed: use at least 1 and at most " +
                                      std::to_string(kMaxThreads) + " threads");
  }
  return threads;
}

std::vector<std::pair<std::string, std::string>> experiment_values_given(
    const po::variables_map& vm) {
  std::vector<std::pair<std::string, std::string>> given;
  for (const auto& key : experiment_keys()) {
    if (vm.count(key.name)) given.emplace_back(key.name, vm[key.name].as<std::string>());
  }
  return given;
}

std::string with_option_names(std::string text) {
  static const std::pair<const char*, const char*> kOptions[] = {
      {"values = shares", "--values shares"},
      {"values = counts", "--values counts"},
      {"units = N", "--units N"},
      {"missing = zero", "--missing zero"},
      {"(rescale)", "(--rescale)"},
      {"raise mass_units", "raise --mass-units"}};
  for (const auto& [setting, option] : kOptions) {
    const std::string from = setting;
    for (auto at = text.find(from); at != std::string::npos; at = text.find(from, at))
      text.replace(at, from.size(), option);
  }
  return text;
}

}  // namespace allocsim::cli
