#include "report.hpp"

#include <algorithm>
#include <cmath>
#include <iomanip>
#include <sstream>

namespace allocsim::bench {
namespace {

std::string verdict_text(Verdict verdict) {
  switch (verdict) {
    case Verdict::met:
      return "met";
    case Verdict::missed:
      return "MISSED";
    case Verdict::info:
      return "";
  }
  return "";
}

std::string ratio_text(double ratio) {
  if (ratio <= 0 || !std::isfinite(ratio)) return "";
  return format_number(ratio) + "x";
}

}  // namespace

std::string format_number(double value, int digits) {
  if (!std::isfinite(value)) return "n/a";
  std::ostringstream out;
  out << std::setprecision(digits) << value;
  return out.str();
}

std::string format_seconds(double seconds) {
  if (!std::isfinite(seconds)) return "n/a";
  const double a = std::abs(seconds);
  if (a >= 1) return format_number(seconds) + " s";
  if (a >= 1e-3) return format_number(seconds * 1e3) + " ms";
  if (a >= 1e-6) return format_number(seconds * 1e6) + " us";
  return format_number(seconds * 1e9) + " ns";
}

void Report::add(Row row) { rows_.push_back(std::move(row)); }

// A Markdown table (it goes into the README as printed).
std::string Report::table() const {
  const std::vector<std::string> head = {"group", "measurement", "ours",   "compared with",
                                         "ratio", "target",      "verdict"};
  std::vector<std::vector<std::string>> cells;
  for (const Row& r : rows_) {
    cells.push_back({r.group, r.name, r.ours, r.reference, ratio_text(r.ratio), r.target,
                     verdict_text(r.verdict)});
  }
  std::vector<std::size_t> width(head.size());
  for (std::size_t k = 0; k < head.size(); ++k) width[k] = head[k].size();
  for (const auto& line : cells)
    for (std::size_t k = 0; k < line.size(); ++k) width[k] = std::max(width[k], line[k].size());
  std::ostringstream out;
  const auto print = [&](const std::vector<std::string>& line) {
    out << "|";
    for (std::size_t k = 0; k < line.size(); ++k)
      out << " " << line[k] << std::string(width[k] - line[k].size(), ' ') << " |";
    out << "\n";
  };
  print(head);
  out << "|";
  for (std::size_t w : width) out << std::string(w + 2, '-') << "|";
  out << "\n";
  for (const auto& line : cells) print(line);
  for (const std::string& n : notes_) out << "\n* " << n;
  if (!notes_.empty()) out << "\n";
  return out.str();
}

std::string Report::json() const {
  std::string rows = "[";
  for (std::size_t k = 0; k < rows_.size(); ++k) {
    const Row& r = rows_[k];
    JsonObject o;
    o.add("group", r.group).add("name", r.name).add("ours", r.ours).add("reference", r.reference);
    if (r.ratio > 0)
      o.add("ratio", r.ratio);
    else
      o.add_null("ratio");
    o.add("target", r.target)
        .add("verdict", r.verdict == Verdict::info  ? std::string("info")
                        : r.verdict == Verdict::met ? std::string("met")
                                                    : std::string("missed"));
    o.add("values", r.values);
    rows += (k ? "," : "") + o.str();
  }
  rows += "]";
  std::string notes = "[";
  for (std::size_t k = 0; k < notes_.size(); ++k) notes += (k ? "," : "") + json_quote(notes_[k]);
  notes += "]";
  // JsonObject has no raw-array entry: splice the arrays in by hand.
  std::string head = context_.str();
  head.pop_back();  // the closing brace
  return head + (head.size() > 1 ? "," : "") + "\"rows\":" + rows + ",\"notes\":" + notes + "}";
}

}  // namespace allocsim::bench
