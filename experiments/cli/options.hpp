// Helpers shared by the subcommands for Boost.Program_options parsing.
#pragma once

#include <boost/program_options.hpp>
#include <iosfwd>
#include <string>

#include "commands.hpp"

namespace allocsim::cli {

namespace po = boost::program_options;

// Parses `args` against `options` (positional ones as given); turns Boost's
// errors into InputError naming the option. Returns false (after printing
// usage to stdout) when --help was asked.
bool parse_or_help(const Arguments& args, const po::options_description& options,
                   const po::positional_options_description& positional, po::variables_map& vm,
                   const std::string& command, const std::string& usage);

}  // namespace allocsim::cli
