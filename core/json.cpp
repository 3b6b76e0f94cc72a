#include "allocsim/core/json.hpp"

#include <cmath>
#include <cstdio>

#include "allocsim/core/csv.hpp"

namespace allocsim {

std::string json_quote(const std::string& text) {
  std::string out = "\"";
  for (const unsigned char ch : text) {
    switch (ch) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\r': out += "\\r"; break;
      case '\t': out += "\\t"; break;
      default:
        if (ch < 0x20) {
          char buffer[8];
          std::snprintf(buffer, sizeof buffer, "\\u%04x", ch);
          out += buffer;
        } else {
          out += static_cast<char>(ch);
        }
    }
  }
  return out + "\"";
}

std::string json_number(double value) {
  return std::isfinite(value) ? format_number(value) : "null";
}

void JsonObject::add_raw(const std::string& key, std::string raw) {
  fields_.emplace_back(key, std::move(raw));
}

JsonObject& JsonObject::add(const std::string& key, double value) {
  add_raw(key, json_number(value));
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, long long value) {
  add_raw(key, std::to_string(value));
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, bool value) {
  add_raw(key, value ? "true" : "false");
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, const std::string& value) {
  add_raw(key, json_quote(value));
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, const JsonObject& value) {
  add_raw(key, value.str());
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, const std::vector<double>& values) {
  std::string raw = "[";
  for (std::size_t k = 0; k < values.size(); ++k) {
    if (k) raw += ",";
    raw += json_number(values[k]);
  }
  add_raw(key, raw + "]");
  return *this;
}
JsonObject& JsonObject::add(const std::string& key, const std::vector<JsonObject>& values) {
  std::string raw = "[";
  for (std::size_t k = 0; k < values.size(); ++k) {
    if (k) raw += ",";
    raw += values[k].str();
  }
  add_raw(key, raw + "]");
  return *this;
}
JsonObject& JsonObject::add_null(const std::string& key) {
  add_raw(key, "null");
  return *this;
}

std::string JsonObject::str() const {
  std::string out = "{";
  for (std::size_t k = 0; k < fields_.size(); ++k) {
    if (k) out += ",";
    out += json_quote(fields_[k].first) + ":" + fields_[k].second;
  }
  return out + "}";
}

}  // namespace allocsim
