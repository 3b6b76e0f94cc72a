#include "allocsim/core/memory_limit.hpp"

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <sstream>

#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();
constexpr const char* kLimitVariable = "ALLOCSIM_MEMORY_LIMIT_BYTES";

// MemAvailable from /proc/meminfo, in bytes; +infinity when absent.
double meminfo_available() {
  std::ifstream in("/proc/meminfo");
  std::string key;
  double kilobytes = 0;
  std::string unit;
  while (in >> key >> kilobytes >> unit) {
    if (key == "MemAvailable:") return kilobytes * 1024.0;
  }
  return kInfinity;
}

double sysconf_available() {
  const long pages = sysconf(_SC_AVPHYS_PAGES);
  const long page_size = sysconf(_SC_PAGESIZE);
  if (pages <= 0 || page_size <= 0) return kInfinity;
  return static_cast<double>(pages) * static_cast<double>(page_size);
}

// One number from a cgroup file; +infinity for "max", a missing file or text.
double cgroup_number(const std::string& path) {
  std::ifstream in(path);
  std::string text;
  if (!(in >> text) || text == "max") return kInfinity;
  char* end = nullptr;
  const double value = std::strtod(text.c_str(), &end);
  return (end && *end == '\0' && value > 0) ? value : kInfinity;
}

// The cgroup v2 limit left to this process: memory.max - memory.current of
// its own cgroup (from /proc/self/cgroup's "0::/path" line).
double cgroup_available() {
  std::ifstream in("/proc/self/cgroup");
  std::string line;
  while (std::getline(in, line)) {
    if (line.rfind("0::", 0) != 0) continue;
    const std::string dir = "/sys/fs/cgroup" + line.substr(3);
    const double limit = cgroup_number(dir + "/memory.max");
    if (!std::isfinite(limit)) return kInfinity;
    const double used = cgroup_number(dir + "/memory.current");
    return std::isfinite(used) ? std::max(limit - used, 0.0) : limit;
  }
  return kInfinity;
}

double environment_limit() {
  const char* text = std::getenv(kLimitVariable);
  if (!text || !*text) return kInfinity;
  char* end = nullptr;
  const double value = std::strtod(text, &end);
  if (end == text || *end != '\0' || !(value > 0) || !std::isfinite(value)) {
    throw InputError(kLimitVariable, std::string("is '") + text +
                                         "'; set it to a positive number of bytes, e.g. 4e9");
  }
  return value;
}

}  // namespace

double available_memory_bytes() {
  double available = meminfo_available();
  if (!std::isfinite(available)) available = sysconf_available();
  return std::min({available, cgroup_available(), environment_limit()});
}

void require_memory(double bytes, const std::string& what, const std::string& where,
                    const std::string& advice) {
  const double available = available_memory_bytes();
  if (!(bytes > available) && std::isfinite(bytes)) return;
  std::string text = what + " needs about " + format_bytes(bytes) + " of memory (estimate), but " +
                     format_bytes(available) + " is available";
  if (std::getenv(kLimitVariable)) text += std::string(" (") + kLimitVariable + ")";
  text += "; " + (advice.empty() ? std::string("use a smaller problem") : advice);
  throw InputError(where, text);
}

double dense_matrix_bytes(double rows, double cols, double count) {
  return rows * cols * static_cast<double>(sizeof(double)) * count;
}

std::string format_bytes(double bytes) {
  if (!std::isfinite(bytes)) return "unlimited";
  static const char* const units[] = {"B", "kB", "MB", "GB", "TB", "PB", "EB"};
  int k = 0;
  double value = bytes;
  while (value >= 1000.0 && k < 6) {
    value /= 1000.0;
    ++k;
  }
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, k == 0 ? "%.0f %s" : "%.3g %s", value, units[k]);
  return buffer;
}

}  // namespace allocsim
