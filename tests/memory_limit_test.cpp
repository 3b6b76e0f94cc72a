// Refusing sizes whose memory would exceed what the machine has.
#include "allocsim/core/memory_limit.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;

namespace {

// Sets ALLOCSIM_MEMORY_LIMIT_BYTES for one scope.
class MemoryLimitVariable {
 public:
  explicit MemoryLimitVariable(const char* value) {
    ::setenv("ALLOCSIM_MEMORY_LIMIT_BYTES", value, 1);
  }
  ~MemoryLimitVariable() { ::unsetenv("ALLOCSIM_MEMORY_LIMIT_BYTES"); }
};

std::string message_of(const std::function<void()>& work) {
  try {
    work();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("available memory is positive and at most the machine's total", "[memory]") {
  const double available = available_memory_bytes();
  REQUIRE(available > 0);
  // /proc/meminfo's MemTotal bounds MemAvailable (Linux proc(5)).
  std::ifstream in("/proc/meminfo");
  std::string key, unit;
  double kilobytes = 0;
  while (in >> key >> kilobytes >> unit) {
    if (key == "MemTotal:") CHECK(available <= kilobytes * 1024.0);
  }
}

TEST_CASE("a request far beyond the machine is refused with the estimate in the message",
          "[memory]") {
  const double bytes = dense_matrix_bytes(1e6, 1e6, 4);  // 4 matrices of 1e12 doubles: 32 TB
  CHECK(bytes == 3.2e13);
  const std::string message =
      message_of([&] { require_memory(bytes, "a solve of 1000000 x 1000000 cells", "gains.csv"); });
  CHECK(message.rfind("gains.csv: a solve of 1000000 x 1000000 cells needs about 32 TB", 0) == 0);
  CHECK(message.find("is available; use a smaller problem") != std::string::npos);
}

TEST_CASE("a small request passes", "[memory]") {
  CHECK_NOTHROW(require_memory(dense_matrix_bytes(100, 100), "a small solve", "here"));
}

TEST_CASE("the environment variable lowers the limit and is named in the message", "[memory]") {
  MemoryLimitVariable limit("1e6");
  CHECK(available_memory_bytes() <= 1e6);
  CHECK_NOTHROW(require_memory(9e5, "work", "here"));
  const std::string message = message_of([] { require_memory(2e6, "work", "here", "do less"); });
  CHECK(message ==
        "here: work needs about 2 MB of memory (estimate), but 1 MB is available "
        "(ALLOCSIM_MEMORY_LIMIT_BYTES); do less");
}

TEST_CASE("a malformed limit variable is an input error naming it", "[memory]") {
  for (const char* bad : {"lots", "-5", "0", "1e6x", "inf"}) {
    MemoryLimitVariable limit(bad);
    INFO(bad);
    CHECK(message_of([] { available_memory_bytes(); }).rfind("ALLOCSIM_MEMORY_LIMIT_BYTES: ", 0) ==
          0);
  }
}

TEST_CASE("NaN and infinite estimates are refused, not waved through", "[memory]") {
  CHECK_THROWS_AS(require_memory(std::nan(""), "work", "here"), InputError);
  CHECK_THROWS_AS(require_memory(HUGE_VAL, "work", "here"), InputError);
}

TEST_CASE("bytes are formatted in powers of 1000", "[memory]") {
  CHECK(format_bytes(512) == "512 B");
  CHECK(format_bytes(3.2e6) == "3.2 MB");
  CHECK(format_bytes(2.13e10) == "21.3 GB");
  CHECK(format_bytes(6.4e13) == "64 TB");
}

TEST_CASE("the CSV reader refuses a file whose fields would not fit, before parsing it",
          "[memory][csv]") {
  const auto path = std::filesystem::temp_directory_path() / "allocsim_memory_limit_test.csv";
  {
    std::ofstream out(path);
    for (int i = 0; i < 2000; ++i)
      out << "1,2,3,4,5,6,7,8,9,10\n";  // 20000 fields, 42 kB (21 bytes a line)
  }
  {
    MemoryLimitVariable limit("1e5");
    const std::string message = message_of([&] { read_matrix_csv(path.string()); });
    INFO(message);
    CHECK(message.rfind(path.string() + ": reading 20001 fields (42 kB) needs about", 0) == 0);
    CHECK(message.find("split the file") != std::string::npos);
  }
  CHECK(read_matrix_csv(path.string()).values.rows() == 2000);  // no limit: it reads
  std::filesystem::remove(path);
}
