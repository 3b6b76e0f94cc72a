#include "python_baselines.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>

namespace allocsim::bench {
namespace {

std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char ch : s) out += ch == '\'' ? std::string("'\\''") : std::string(1, ch);
  return out + "'";
}

}  // namespace

double PythonAnswer::number(const std::string& key) const {
  const std::string needle = "\"" + key + "\": ";
  const auto at = text_.find(needle);
  if (at == std::string::npos) return std::numeric_limits<double>::quiet_NaN();
  const char* start = text_.c_str() + at + needle.size();
  char* end = nullptr;
  const double value = std::strtod(start, &end);
  return end == start ? std::numeric_limits<double>::quiet_NaN() : value;
}

bool PythonAnswer::flag(const std::string& key) const {
  const std::string needle = "\"" + key + "\": true";
  return text_.find(needle) != std::string::npos;
}

std::string PythonAnswer::word(const std::string& key) const {
  const std::string needle = "\"" + key + "\": \"";
  const auto at = text_.find(needle);
  if (at == std::string::npos) return "";
  const auto begin = at + needle.size();
  return text_.substr(begin, text_.find('"', begin) - begin);
}

PythonAnswer run_python(const std::vector<std::string>& arguments, const std::string& script,
                        const std::string& python_path) {
  std::string command =
      "env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 OMP_NUM_THREADS=1 " +
      (python_path.empty() ? std::string() : "PYTHONPATH=" + shell_quote(python_path) + " ") +
      shell_quote(ALLOCSIM_BENCH_PYTHON) + " " + shell_quote(script);
  for (const auto& a : arguments) command += " " + shell_quote(a);
  std::FILE* pipe = popen(command.c_str(), "r");
  if (!pipe) return PythonAnswer("");
  std::string text;
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe)) text += buffer;
  pclose(pipe);
  while (!text.empty() && (text.back() == '\n' || text.back() == '\r')) text.pop_back();
  return PythonAnswer(text);
}

}  // namespace allocsim::bench
