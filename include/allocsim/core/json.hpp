// A small writer for one JSON object on one line (the --json output).
//
// Keys keep their insertion order. Non-finite numbers are written as null,
// since JSON has no NaN or Infinity.
#pragma once

#include <string>
#include <vector>

namespace allocsim {

class JsonObject {
 public:
  JsonObject& add(const std::string& key, double value);
  JsonObject& add(const std::string& key, long long value);
  JsonObject& add(const std::string& key, int value) { return add(key, static_cast<long long>(value)); }
  JsonObject& add(const std::string& key, bool value);
  JsonObject& add(const std::string& key, const std::string& value);
  JsonObject& add(const std::string& key, const char* value) { return add(key, std::string(value)); }
  JsonObject& add(const std::string& key, const JsonObject& value);
  JsonObject& add(const std::string& key, const std::vector<double>& values);
  JsonObject& add(const std::string& key, const std::vector<JsonObject>& values);
  JsonObject& add_null(const std::string& key);

  std::string str() const;

 private:
  void add_raw(const std::string& key, std::string raw);
  std::vector<std::pair<std::string, std::string>> fields_;
};

std::string json_quote(const std::string& text);
std::string json_number(double value);

}  // namespace allocsim
