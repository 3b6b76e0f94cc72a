#include "allocsim/experiments/benchmark_score.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <numeric>
#include <optional>
#include <sstream>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr int kBands = 5;
const double kInf = std::numeric_limits<double>::infinity();

std::optional<double> read_value(const std::string& cell) {
  std::string t = cell;
  t.erase(0, t.find_first_not_of(" \t"));
  t.erase(t.find_last_not_of(" \t") + 1);
  if (t == "inf" || t == "Inf" || t == "INF" || t == "infinity" || t == "Infinity") return kInf;
  char* end = nullptr;
  const double value = std::strtod(t.c_str(), &end);
  if (t.empty() || *end != '\0' || std::isnan(value) || std::isinf(value)) return std::nullopt;
  return value;
}

bool blank(const std::string& cell) { return cell.find_first_not_of(" \t") == std::string::npos; }

// numpy's default (linear) quantile of sorted values.
double quantile(const std::vector<double>& sorted, double q) {
  const double at = q * static_cast<double>(sorted.size() - 1);
  const auto below = static_cast<std::size_t>(std::floor(at));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  if (sorted[above] == sorted[below]) return sorted[below];
  return sorted[below] + (at - static_cast<double>(below)) * (sorted[above] - sorted[below]);
}

double median(std::vector<double> values) {
  if (values.empty()) return ScoredCase::kNone;
  std::sort(values.begin(), values.end());
  const std::size_t h = values.size() / 2;
  if (values.size() % 2) return values[h];
  if (std::isinf(values[h])) return values[h - 1] == values[h] ? values[h] : kInf;
  return 0.5 * (values[h - 1] + values[h]);
}

std::vector<double> ranks(const std::vector<double>& values) {
  std::vector<std::size_t> order(values.size());
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](auto a, auto b) { return values[a] < values[b]; });
  std::vector<double> rank(values.size());
  for (std::size_t k = 0; k < order.size();) {
    std::size_t end = k;
    while (end + 1 < order.size() && values[order[end + 1]] == values[order[k]]) ++end;
    for (std::size_t t = k; t <= end; ++t) rank[order[t]] = 0.5 * static_cast<double>(k + end) + 1;
    k = end + 1;
  }
  return rank;
}

// Spearman's rho: Pearson correlation of the ranks; NaN below 3 values or
// when either side is constant.
double spearman(const std::vector<double>& a, const std::vector<double>& b) {
  if (a.size() < 3) return ScoredCase::kNone;
  const auto ra = ranks(a), rb = ranks(b);
  const double n = static_cast<double>(a.size());
  const double ma = std::accumulate(ra.begin(), ra.end(), 0.0) / n;
  const double mb = std::accumulate(rb.begin(), rb.end(), 0.0) / n;
  double sab = 0, saa = 0, sbb = 0;
  for (std::size_t k = 0; k < ra.size(); ++k) {
    sab += (ra[k] - ma) * (rb[k] - mb);
    saa += (ra[k] - ma) * (ra[k] - ma);
    sbb += (rb[k] - mb) * (rb[k] - mb);
  }
  if (!(saa > 0 && sbb > 0)) return ScoredCase::kNone;
  return sab / std::sqrt(saa * sbb);
}

template <class Member>
ScoreGroup summarise(const std::string& grouping, const std::string& group,
                     const std::vector<ScoredCase>& cases, Member member) {
  ScoreGroup s;
  s.grouping = grouping;
  s.group = group;
  std::vector<double> finite, all, truths, estimates;
  for (const auto& c : cases) {
    if (!member(c)) continue;
    ++s.cases;
    if (c.answer != AnswerKind::answered) continue;
    ++s.answered;
    all.push_back(c.relative_error);
    truths.push_back(c.truth);
    estimates.push_back(c.estimate);
    if (std::isinf(c.estimate))
      ++s.infinite;
    else
      finite.push_back(c.relative_error);
    if (c.has_interval) {
      ++s.with_interval;
      s.covered += c.covered;
    }
  }
  if (!finite.empty()) {
    double sum = 0, squares = 0;
    for (const double e : finite) {
      sum += e;
      squares += e * e;
    }
    s.mean_relative_error = sum / static_cast<double>(finite.size());
    s.rms_relative_error = std::sqrt(squares / static_cast<double>(finite.size()));
  }
  s.median_relative_error = median(all);
  for (double& e : all) e = std::abs(e);
  s.median_abs_relative_error = median(all);
  if (s.with_interval > 0)
    s.coverage = static_cast<double>(s.covered) / static_cast<double>(s.with_interval);
  s.rank_correlation = spearman(truths, estimates);
  return s;
}

// Band 1..5 of each value: 1 + the number of quintile edges below it.
std::vector<int> quintile_bands(const std::vector<double>& values) {
  std::vector<double> sorted = values;
  std::sort(sorted.begin(), sorted.end());
  std::vector<int> bands;
  for (const double v : values) {
    int band = 1;
    for (int k = 1; k < kBands; ++k) band += v > quantile(sorted, static_cast<double>(k) / kBands);
    bands.push_back(band);
  }
  return bands;
}

std::string short_number(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%.3g", value);
  return text;
}

std::string band_label(int band, const std::vector<ScoredCase>& cases, bool units) {
  double low = kInf, high = -kInf;
  for (const auto& c : cases) {
    if ((units ? c.units_band : c.epsilon_band) != band) continue;
    const double v = units ? c.units : c.truth;
    low = std::min(low, v);
    high = std::max(high, v);
  }
  const auto show = [&](double v) {
    return units ? std::to_string(std::lround(v)) : short_number(v);
  };
  return "q" + std::to_string(band) + ": " + show(low) + " to " + show(high);
}

struct AnswerColumns {
  std::size_t name = 0, epsilon = 0, low = 0, high = 0;
  bool intervals = false;
};

AnswerColumns answer_columns(const CsvTable& answers) {
  AnswerColumns a;
  a.name = answers.column("case");
  a.epsilon = answers.column("epsilon");
  const bool low = answers.has_column("ci_low"), high = answers.has_column("ci_high");
  if (low != high) {
    throw InputError(answers.path, std::string("has a ") + (low ? "ci_low" : "ci_high") +
                                       " column but no " + (low ? "ci_high" : "ci_low") +
                                       " column; give both or neither");
  }
  a.intervals = low;
  if (low) {
    a.low = answers.column("ci_low");
    a.high = answers.column("ci_high");
  }
  return a;
}

// Reads row r of the answers into c; throws naming the line and case.
void read_answer(const CsvTable& answers, const AnswerColumns& columns, std::size_t r,
                 ScoredCase& c) {
  const auto& row = answers.rows[r];
  const std::string where = location(answers.path, answers.lines[r]);
  const auto refuse = [&](const std::string& what) {
    throw InputError(where, "case " + c.name + ": " + what);
  };
  const bool has_low = columns.intervals && !blank(row[columns.low]);
  const bool has_high = columns.intervals && !blank(row[columns.high]);
  if (blank(row[columns.epsilon])) {
    if (has_low || has_high) refuse("declines (empty epsilon) but gives an interval");
    c.answer = AnswerKind::declined;
    return;
  }
  const auto estimate = read_value(row[columns.epsilon]);
  if (!estimate)
    refuse("epsilon '" + row[columns.epsilon] +
           "' is not a number (write inf, or leave it empty to decline)");
  if (*estimate < 0) refuse("negative estimate " + row[columns.epsilon] + " (epsilon is >= 0)");
  c.answer = AnswerKind::answered;
  c.estimate = *estimate;
  c.relative_error = (c.estimate - c.truth) / c.truth;
  if (has_low != has_high) refuse("gives half an interval (write inf for an unbounded ci_high)");
  if (!has_low) return;
  const auto low = read_value(row[columns.low]), high = read_value(row[columns.high]);
  if (!low || std::isinf(*low)) refuse("ci_low '" + row[columns.low] + "' is not a finite number");
  if (!high) refuse("ci_high '" + row[columns.high] + "' is not a number or inf");
  if (*low < 0) refuse("negative ci_low " + row[columns.low]);
  if (*low > *high) refuse("ci_low " + row[columns.low] + " is above ci_high " + row[columns.high]);
  c.ci_low = *low;
  c.ci_high = *high;
  c.has_interval = true;
  c.covered = c.ci_low <= c.truth && c.truth <= c.ci_high;
}

std::vector<ScoredCase> read_truth(const CsvTable& truth) {
  const std::size_t name = truth.column("case"), epsilon = truth.column("true_epsilon");
  const auto optional_column = [&](const char* column) {
    return truth.has_column(column) ? std::optional<std::size_t>(truth.column(column))
                                    : std::nullopt;
  };
  const auto family = optional_column("family"), source = optional_column("source"),
             misspecified = optional_column("misspecified"), units = optional_column("units"),
             agents = optional_column("agents"), partners = optional_column("partners");
  std::vector<ScoredCase> cases;
  std::map<std::string, long> seen;
  for (std::size_t r = 0; r < truth.rows.size(); ++r) {
    ScoredCase c;
    c.name = truth.rows[r][name];
    if (!seen.emplace(c.name, truth.lines[r]).second)
      throw InputError(location(truth.path, truth.lines[r]),
                       "case " + c.name + " appears twice in the truth");
    c.truth = truth.number(r, epsilon);
    if (!(c.truth > 0))
      throw InputError(location(truth.path, truth.lines[r]),
                       "true_epsilon of " + c.name + " is not > 0");
    if (family) c.family = truth.rows[r][*family];
    if (source) c.source = truth.rows[r][*source];
    if (misspecified) c.misspecified = truth.rows[r][*misspecified] == "true";
    if (units) c.units = truth.number(r, *units);
    if (agents) c.agents = std::lround(truth.number(r, *agents));
    if (partners) c.partners = std::lround(truth.number(r, *partners));
    cases.push_back(c);
  }
  if (cases.empty()) throw InputError(truth.path, "holds no cases");
  return cases;
}

// The distinct values of a field, in the order of `preferred` first, then alphabetically.
std::vector<std::string> distinct(const std::vector<ScoredCase>& cases,
                                  std::string ScoredCase::*field,
                                  const std::vector<std::string>& preferred = {}) {
  std::vector<std::string> values;
  for (const auto& c : cases)
    if (std::find(values.begin(), values.end(), c.*field) == values.end())
      values.push_back(c.*field);
  const auto rank = [&](const std::string& v) {
    return std::find(preferred.begin(), preferred.end(), v) - preferred.begin();
  };
  std::sort(values.begin(), values.end(), [&](const std::string& a, const std::string& b) {
    return rank(a) != rank(b) ? rank(a) < rank(b) : a < b;
  });
  return values;
}

std::string cell(double value) { return std::isnan(value) ? "" : format_number(value); }

std::string json_key(const std::string& grouping) {
  std::string key = grouping;
  std::replace(key.begin(), key.end(), ' ', '_');
  return key;
}

JsonObject group_json(const ScoreGroup& s) {
  JsonObject group;
  group.add("cases", static_cast<long long>(s.cases))
      .add("answered", static_cast<long long>(s.answered))
      .add("infinite", static_cast<long long>(s.infinite))
      .add("mean_relative_error", s.mean_relative_error)
      .add("rms_relative_error", s.rms_relative_error)
      .add("median_relative_error", s.median_relative_error)
      .add("median_abs_relative_error", s.median_abs_relative_error)
      .add("with_interval", static_cast<long long>(s.with_interval))
      .add("covered", static_cast<long long>(s.covered))
      .add("coverage", s.coverage)
      .add("rank_correlation", s.rank_correlation);
  return group;
}

std::string fixed(double value, const char* format, int width) {
  char text[48];
  if (std::isnan(value))
    std::snprintf(text, sizeof text, "%*s", width, "-");
  else if (std::isinf(value))
    std::snprintf(text, sizeof text, "%*s", width, value > 0 ? "inf" : "-inf");
  else
    std::snprintf(text, sizeof text, format, width, value);
  return text;
}

}  // namespace

constexpr EnumWord<AnswerKind> kAnswerKindWords[] = {{AnswerKind::answered, "answered"},
                                                     {AnswerKind::declined, "declined"},
                                                     {AnswerKind::missing, "missing"}};

std::string to_string(AnswerKind value) { return word_of(value, kAnswerKindWords); }

ScoreReport score_answers(const CsvTable& truth, const CsvTable& answers) {
  ScoreReport report;
  report.cases = read_truth(truth);
  std::map<std::string, std::size_t> index;
  for (std::size_t k = 0; k < report.cases.size(); ++k) index[report.cases[k].name] = k;

  const AnswerColumns columns = answer_columns(answers);
  std::map<std::string, long> answered_at;
  for (std::size_t r = 0; r < answers.rows.size(); ++r) {
    const std::string& name = answers.rows[r][columns.name];
    const std::string where = location(answers.path, answers.lines[r]);
    const auto found = index.find(name);
    if (found == index.end())
      throw InputError(where, "answers case '" + name +
                                  "', which the truth does not hold (wrong benchmark set?)");
    if (!answered_at.emplace(name, answers.lines[r]).second)
      throw InputError(where, "answers case " + name + " twice (first on line " +
                                  std::to_string(answered_at[name]) + ")");
    read_answer(answers, columns, r, report.cases[found->second]);
  }

  std::vector<double> truths, units;
  bool units_known = true;
  for (const auto& c : report.cases) {
    truths.push_back(c.truth);
    units.push_back(c.units);
    units_known = units_known && !std::isnan(c.units);
  }
  const std::vector<int> epsilon_bands = quintile_bands(truths);
  const std::vector<int> units_bands =
      units_known ? quintile_bands(units) : std::vector<int>(units.size(), 0);
  for (std::size_t k = 0; k < report.cases.size(); ++k) {
    report.cases[k].epsilon_band = epsilon_bands[k];
    report.cases[k].units_band = units_bands[k];
  }

  auto& groups = report.groups;
  const auto& cases = report.cases;
  groups.push_back(summarise("all", "all", cases, [](const ScoredCase&) { return true; }));
  for (const auto& f : distinct(cases, &ScoredCase::family))
    groups.push_back(
        summarise("family", f, cases, [&](const ScoredCase& c) { return c.family == f; }));
  for (const auto& s : distinct(cases, &ScoredCase::source,
                                {"model", "price", "gumbel", "queue", "learn", "mixed-noise"}))
    groups.push_back(
        summarise("source", s, cases, [&](const ScoredCase& c) { return c.source == s; }));
  for (const bool misspecified : {false, true}) {
    const auto member = [&](const ScoredCase& c) { return c.misspecified == misspecified; };
    if (std::any_of(cases.begin(), cases.end(), member))
      groups.push_back(
          summarise("model", misspecified ? "misspecified" : "entropic model true", cases, member));
  }
  for (int band = 1; band <= kBands; ++band) {
    if (std::find(epsilon_bands.begin(), epsilon_bands.end(), band) == epsilon_bands.end())
      continue;
    groups.push_back(summarise("epsilon band", band_label(band, cases, false), cases,
                               [&](const ScoredCase& c) { return c.epsilon_band == band; }));
  }
  for (int band = 1; units_known && band <= kBands; ++band) {
    if (std::find(units_bands.begin(), units_bands.end(), band) == units_bands.end()) continue;
    groups.push_back(summarise("units band", band_label(band, cases, true), cases,
                               [&](const ScoredCase& c) { return c.units_band == band; }));
  }
  return report;
}

JsonObject ScoreReport::json() const {
  JsonObject json;
  long long declined = 0, missing = 0;
  for (const auto& c : cases) {
    declined += c.answer == AnswerKind::declined;
    missing += c.answer == AnswerKind::missing;
  }
  json.add("cases", static_cast<long long>(cases.size()))
      .add("declined", declined)
      .add("missing", missing);
  json.add("all", group_json(groups.front()));
  for (const char* grouping : {"family", "source", "model", "epsilon band", "units band"}) {
    JsonObject members;
    for (const auto& g : groups)
      if (g.grouping == grouping) members.add(g.group, group_json(g));
    json.add(json_key(grouping), members);
  }
  return json;
}

std::string ScoreReport::text() const {
  std::ostringstream out;
  long declined = 0, missing = 0;
  for (const auto& c : cases) {
    declined += c.answer == AnswerKind::declined;
    missing += c.answer == AnswerKind::missing;
  }
  out << cases.size() << " cases: " << cases.size() - declined - missing << " answered, "
      << declined << " declined, " << missing << " without an answer (both count as unanswered)\n";
  const std::map<std::string, std::string> titles = {
      {"all", "all cases"},
      {"family", "by gains family"},
      {"source", "by source"},
      {"model", "by specification"},
      {"epsilon band", "by true epsilon (quintiles)"},
      {"units band", "by units (quintiles)"}};
  std::string current;
  for (const auto& g : groups) {
    if (g.grouping != current) {
      current = g.grouping;
      char header[256];
      std::snprintf(header, sizeof header, "\n%-28s %6s %8s %4s %9s %8s %9s %9s %8s %8s\n",
                    titles.at(g.grouping).c_str(), "cases", "answered", "inf", "bias", "RMS rel.",
                    "median", "med.|rel|", "coverage", "Spearman");
      out << header;
    }
    char head[128];
    std::snprintf(head, sizeof head, "  %-26s %6ld %8ld %4ld ", g.group.c_str(), g.cases,
                  g.answered, g.infinite);
    out << head;
    if (g.answered == 0) {
      out << "no answers\n";
      continue;
    }
    out << fixed(g.mean_relative_error, "%+*.4f", 9) << " "
        << fixed(g.rms_relative_error, "%*.4f", 8) << " "
        << fixed(g.median_relative_error, "%+*.4f", 9) << " "
        << fixed(g.median_abs_relative_error, "%*.4f", 9) << " " << fixed(g.coverage, "%*.3f", 8)
        << " " << fixed(g.rank_correlation, "%*.3f", 8) << "\n";
  }
  out << "\nbias: mean relative error (epsilon_hat - epsilon) / epsilon over finite answers; RMS "
         "likewise;\n"
      << "median, med.|rel|: of the relative error over all answers; inf: answers of infinity;\n"
      << "coverage: share of the given intervals that hold the truth; -: not computable\n"
      << "(no intervals, or fewer than 3 answers for Spearman)\n";
  return out.str();
}

CsvTable ScoreReport::per_case_table() const {
  CsvTable table;
  table.header = {"case",   "family",   "source",         "misspecified", "true_epsilon", "units",
                  "agents", "partners", "epsilon_band",   "units_band",   "answer",       "epsilon",
                  "ci_low", "ci_high",  "relative_error", "covered"};
  for (const auto& c : cases) {
    table.rows.push_back({c.name, c.family, c.source, c.misspecified ? "true" : "false",
                          format_number(c.truth), cell(c.units), std::to_string(c.agents),
                          std::to_string(c.partners), std::to_string(c.epsilon_band),
                          std::to_string(c.units_band), to_string(c.answer), cell(c.estimate),
                          cell(c.ci_low), cell(c.ci_high), cell(c.relative_error),
                          c.has_interval ? (c.covered ? "true" : "false") : ""});
  }
  return table;
}

CsvTable ScoreReport::group_table() const {
  CsvTable table;
  table.header = {"grouping",
                  "group",
                  "cases",
                  "answered",
                  "infinite",
                  "mean_relative_error",
                  "rms_relative_error",
                  "median_relative_error",
                  "median_abs_relative_error",
                  "with_interval",
                  "covered",
                  "coverage",
                  "rank_correlation"};
  for (const auto& g : groups) {
    table.rows.push_back({g.grouping, g.group, std::to_string(g.cases), std::to_string(g.answered),
                          std::to_string(g.infinite), cell(g.mean_relative_error),
                          cell(g.rms_relative_error), cell(g.median_relative_error),
                          cell(g.median_abs_relative_error), std::to_string(g.with_interval),
                          std::to_string(g.covered), cell(g.coverage), cell(g.rank_correlation)});
  }
  return table;
}

}  // namespace allocsim
