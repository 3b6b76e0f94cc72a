// Replays the fuzzing seed corpora and the regression cases kept from
// fuzzing (tests/fuzz/corpus/<target>/, tests/fuzz/regressions/<target>/)
// through the fuzzing targets' checks (tests/fuzz/fuzz_checks.hpp), so that
// every build, including the sanitizer build, re-runs them.
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "fuzz/fuzz_checks.hpp"

namespace fs = std::filesystem;

namespace {

const fs::path kFuzzDir = fs::path(ALLOCSIM_TEST_DATA).parent_path() / "fuzz";

std::vector<fs::path> cases_of(const std::string& target) {
  std::vector<fs::path> files;
  for (const char* kind : {"corpus", "regressions"}) {
    const fs::path dir = kFuzzDir / kind / target;
    if (!fs::is_directory(dir)) continue;
    for (const auto& entry : fs::directory_iterator(dir)) {
      if (entry.is_regular_file() && entry.path().filename() != "README.md")
        files.push_back(entry.path());
    }
  }
  std::sort(files.begin(), files.end());
  return files;
}

std::string bytes_of(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

}  // namespace

TEST_CASE("the CSV reader handles every seed and regression input of its fuzzer", "[fuzz]") {
  const auto files = cases_of("csv_reader");
  REQUIRE(files.size() >= 10);
  for (const auto& file : files) {
    INFO(file.string());
    CHECK(allocsim::fuzz::csv_reader_finding(bytes_of(file)) == "");
  }
}

TEST_CASE("the experiment-file parser handles every seed and regression input of its fuzzer",
          "[fuzz]") {
  const auto files = cases_of("experiment_file");
  REQUIRE(files.size() >= 10);
  const std::string path =
      (fs::temp_directory_path() / ("allocsim_fuzz_replay_" + std::to_string(::getpid()) + ".ini"))
          .string();
  for (const auto& file : files) {
    INFO(file.string());
    CHECK(allocsim::fuzz::experiment_file_finding(bytes_of(file), path) == "");
  }
  fs::remove(path);
}
