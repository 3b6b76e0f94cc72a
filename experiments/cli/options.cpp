#include "options.hpp"

#include <iostream>

#include "allocsim/core/error.hpp"

namespace allocsim::cli {

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

}  // namespace allocsim::cli
