// Fixtures that tests share: small input files written into the test's
// working folder (ctest runs each test in the build's tests/ folder).
#pragma once

#include <fstream>
#include <string>

namespace allocsim::testing {

// Writes `text` to "<name>" in the working folder and returns the path.
inline std::string write_test_file(const std::string& name, const std::string& text) {
  std::ofstream(name, std::ios::binary) << text;
  return name;
}

}  // namespace allocsim::testing
