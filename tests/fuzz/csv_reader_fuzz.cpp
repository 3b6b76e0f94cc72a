// libFuzzer target: the CSV reader (parse_matrix_csv, split_csv_record) on
// arbitrary bytes; see fuzz_checks.hpp for what counts as a finding.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "fuzz_checks.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string finding =
      allocsim::fuzz::csv_reader_finding(std::string(reinterpret_cast<const char*>(data), size));
  if (!finding.empty()) {
    std::fprintf(stderr, "csv_reader_fuzz: %s\n", finding.c_str());
    std::abort();
  }
  return 0;
}
