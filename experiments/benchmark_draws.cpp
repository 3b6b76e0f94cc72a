#include "allocsim/experiments/benchmark_draws.hpp"

#include <cmath>
#include <cstdlib>
#include <regex>
#include <sstream>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/sweep.hpp"

namespace allocsim {
namespace {

long read_whole(const std::string& item, const std::string& where, const std::string& text) {
  const double value = finite_number_in(item, where, text);
  if (value != std::floor(value) || value < 2 || value > 1e9) {
    throw InputError(
        where, "'" + trim_blanks(item) + "' in '" + text + "' is not a whole number in [2, 1e9]");
  }
  return static_cast<long>(value);
}

std::vector<std::string> split_commas(const std::string& text) {
  std::vector<std::string> items;
  std::string item;
  int depth = 0;
  for (const char c : text) {
    if (c == '(') ++depth;
    if (c == ')') --depth;
    if (c == ',' && depth == 0) {
      items.push_back(trim_blanks(item));
      item.clear();
    } else {
      item += c;
    }
  }
  items.push_back(trim_blanks(item));
  return items;
}

}  // namespace

double NumberLaw::value(long index, RandomStream& rng) const {
  switch (kind) {
    case Kind::grid:
      return values[static_cast<std::size_t>(index) % values.size()];
    case Kind::uniform:
      return low + (high - low) * rng.uniform();
    case Kind::loguniform:
      return std::exp(std::log(low) + (std::log(high) - std::log(low)) * rng.uniform());
  }
  return 0;
}

NumberLaw parse_number_law(const std::string& text, const std::string& where, bool positive) {
  static const std::regex drawn(R"(^\s*(loguniform|uniform)\s*\(([^,()]*),([^,()]*)\)\s*$)");
  NumberLaw law;
  law.text = trim_blanks(text);
  std::smatch m;
  if (std::regex_match(text, m, drawn)) {
    law.kind = m[1] == "loguniform" ? NumberLaw::Kind::loguniform : NumberLaw::Kind::uniform;
    law.low = finite_number_in(m[2], where, law.text);
    law.high = finite_number_in(m[3], where, law.text);
    if (!(law.low < law.high)) {
      throw InputError(where, "'" + law.text + "' needs its lower end below its upper end");
    }
    if ((positive || law.kind == NumberLaw::Kind::loguniform) && !(law.low > 0)) {
      throw InputError(where, "'" + law.text + "' needs both ends > 0");
    }
    return law;
  }
  static const std::regex grid(R"(^\s*(log|linear)\s*\(.*$)");
  if (text.find('(') != std::string::npos && !std::regex_match(text, grid)) {
    throw InputError(where, "'" + law.text +
                                "' is not a number, a list, log(a, b, n), linear(a, b, n), "
                                "loguniform(a, b) or uniform(a, b)");
  }
  for (const std::string& item : expand_sweep_values(text, where)) {
    const double value = finite_number_in(item, where, law.text);
    if (positive && !(value > 0))
      throw InputError(where, "'" + item + "' in '" + law.text + "' is not > 0");
    law.values.push_back(value);
  }
  return law;
}

long WholeRange::draw(RandomStream& rng) const {
  return low + static_cast<long>(rng.below(static_cast<std::uint64_t>(high - low + 1)));
}

ShapeLaw parse_shape_law(const std::string& text, const std::string& where) {
  static const std::regex item_form(
      R"(^\s*(agents|partners)\s*=\s*([^.]+?)\s*(?:\.\.\s*(.+?))?\s*$)");
  ShapeLaw shape;
  shape.text = trim_blanks(text);
  shape.where = where;
  bool seen_agents = false, seen_partners = false;
  for (const std::string& item : split_commas(text)) {
    std::smatch m;
    if (!std::regex_match(item, m, item_form)) {
      throw InputError(where, "'" + item + "' in '" + shape.text +
                                  "' is not agents=LOW..HIGH or partners=LOW..HIGH");
    }
    WholeRange range;
    range.low = read_whole(m[2], where, shape.text);
    range.high = m[3].matched ? read_whole(m[3], where, shape.text) : range.low;
    if (range.high < range.low) {
      throw InputError(where, "'" + item + "' runs from high to low; write LOW..HIGH");
    }
    bool& seen = m[1] == "agents" ? seen_agents : seen_partners;
    if (seen) throw InputError(where, "'" + shape.text + "' names " + std::string(m[1]) + " twice");
    seen = true;
    (m[1] == "agents" ? shape.agents : shape.partners) = range;
  }
  return shape;
}

std::string MarginalLaw::text() const {
  if (kind == MassKind::uniform) return "uniform";
  return to_string(kind) + "(" + format_number(parameter) + ")";
}

std::vector<MarginalLaw> parse_marginal_laws(const std::string& text, const std::string& where) {
  static const std::regex item_form(R"(^\s*([a-z]+)\s*(?:\(([^()]*)\))?\s*$)");
  std::vector<MarginalLaw> laws;
  for (const std::string& item : split_commas(text)) {
    std::smatch m;
    if (item.empty() || !std::regex_match(item, m, item_form)) {
      throw InputError(where, "'" + item + "' in '" + trim_blanks(text) +
                                  "' is not uniform, zipf(EXPONENT) or lognormal(SIGMA)");
    }
    MarginalLaw law;
    law.kind = mass_kind_from_string(m[1], where);
    if (law.kind == MassKind::file) throw InputError(where, "'file' marginals cannot be generated");
    if (law.kind == MassKind::uniform && m[2].matched) {
      throw InputError(where, "'" + item + "': uniform takes no parameter");
    }
    law.parameter = law.kind == MassKind::zipf ? 1.0 : 0.5;
    if (m[2].matched) law.parameter = finite_number_in(m[2], where, item);
    if (!(law.parameter >= 0))
      throw InputError(where, "'" + item + "': the parameter must be >= 0");
    laws.push_back(law);
  }
  return laws;
}

}  // namespace allocsim
