// libFuzzer target: the experiment-file parser (read_experiment_file) on
// arbitrary bytes, written to a temporary file because the parser reads a
// path; see fuzz_checks.hpp for what counts as a finding.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "fuzz_checks.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const std::string path = [] {
    const char* dir = std::getenv("TMPDIR");
    return std::string(dir && *dir ? dir : "/tmp") + "/allocsim_fuzz_" +
           std::to_string(::getpid()) + ".ini";
  }();
  const std::string finding = allocsim::fuzz::experiment_file_finding(
      std::string(reinterpret_cast<const char*>(data), size), path);
  if (!finding.empty()) {
    std::fprintf(stderr, "experiment_file_fuzz: %s\n", finding.c_str());
    std::abort();
  }
  return 0;
}
