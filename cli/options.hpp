// Helpers shared by the subcommands for Boost.Program_options parsing.
#pragma once

#include <boost/program_options.hpp>
#include <iosfwd>
#include <string>
#include <utility>
#include <vector>

#include "commands.hpp"

namespace allocsim::cli {

namespace po = boost::program_options;

// Parses `args` against `options` (positional ones as given); turns Boost's
// errors into InputError naming the option. Returns false (after printing
// usage to stdout) when --help was asked.
bool parse_or_help(const Arguments& args, const po::options_description& options,
                   const po::positional_options_description& positional, po::variables_map& vm,
                   const std::string& command, const std::string& usage);

// Adds every experiment key as a --section.key option.
void add_experiment_key_options(po::options_description& options);

// Parses a command that takes experiment keys: an unknown option is an
// InputError naming the nearest valid key; positional arguments go to
// `positional` (nullptr: none allowed).
po::variables_map parse_with_experiment_keys(const Arguments& args,
                                             const po::options_description& options,
                                             const po::positional_options_description* positional,
                                             const std::string& command);

// `text` from the library with its setting names as this program's options:
// the library names a setting by its field ("values = shares", "units = N",
// "missing = zero", "rescale", "mass_units"); here they are --values shares,
// --units N, --missing zero, --rescale, --mass-units.
std::string with_option_names(std::string text);

// Most worker threads any command starts; more is refused (a typo such as
// --threads 100000 would otherwise exhaust the process's threads).
constexpr int kMaxThreads = 1024;

// The value of --threads: InputError unless 1 <= N <= kMaxThreads.
int checked_threads(const po::variables_map& vm);

// The (key, value) pairs of the experiment keys given on the command line.
std::vector<std::pair<std::string, std::string>> experiment_values_given(
    const po::variables_map& vm);

}  // namespace allocsim::cli
