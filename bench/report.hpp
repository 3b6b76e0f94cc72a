// The benchmark's rows: a table on stdout, or one JSON object with --json.
#pragma once

#include <string>
#include <vector>

#include "allocsim/core/json.hpp"

namespace allocsim::bench {

enum class Verdict { met, missed, info };

struct Row {
  std::string group;      // e.g. "exact", "entropic"
  std::string name;       // what was measured
  std::string ours;       // our figure, in words ("152 ms")
  std::string reference;  // what it is compared with ("HiGHS 6.1 s")
  double ratio = 0;       // the ratio the target is about (0: none)
  std::string target;     // the target in words, empty when none
  Verdict verdict = Verdict::info;
  JsonObject values;  // the raw numbers, for --json
};

class Report {
 public:
  void add(Row row);
  void note(const std::string& text) { notes_.push_back(text); }
  void set_context(JsonObject context) { context_ = std::move(context); }

  std::string table() const;
  std::string json() const;

 private:
  std::vector<Row> rows_;
  std::vector<std::string> notes_;
  JsonObject context_;
};

// "152 ms", "3.1 s", "48 us": three significant digits in a fitting unit.
std::string format_seconds(double seconds);
std::string format_number(double value, int digits = 3);

}  // namespace allocsim::bench
