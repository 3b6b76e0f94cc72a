#include "allocsim/analysis/observed_allocation.hpp"

#include <cmath>
#include <sstream>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

std::string cell(Eigen::Index i, Eigen::Index j) {
  return "row " + std::to_string(i + 1) + ", column " + std::to_string(j + 1);
}

std::string shape(const char* what, Eigen::Index rows, Eigen::Index cols) {
  return std::string(what) + " " + std::to_string(rows) + " x " + std::to_string(cols);
}

void check_entries(const Matrix& p, const std::optional<Matrix>& given_gains,
                   const std::optional<AccessMask>& access, const AllocationSources& s) {
  const Matrix& gains = given_gains ? *given_gains : p;  // without gains: nothing to check
  if (p.rows() != gains.rows() || p.cols() != gains.cols())
    throw InputError(s.allocation, "is " + shape("", p.rows(), p.cols()).substr(1) + " but " +
                                       s.gains + " is " +
                                       shape("", gains.rows(), gains.cols()).substr(1) +
                                       "; both must be agents x partners");
  if (access && (access->rows() != p.rows() || access->cols() != p.cols()))
    throw InputError(s.access, "is " + shape("", access->rows(), access->cols()).substr(1) +
                                   " but " + s.allocation + " is " +
                                   shape("", p.rows(), p.cols()).substr(1));
  for (Eigen::Index i = 0; i < p.rows(); ++i) {
    for (Eigen::Index j = 0; j < p.cols(); ++j) {
      const double v = p(i, j);
      if (!std::isfinite(v))
        throw InputError(s.allocation, cell(i, j) + ": entry is not a finite number");
      if (v < 0)
        throw InputError(s.allocation, cell(i, j) + ": negative entry " + format_number(v) +
                                           "; an allocation holds units or shares >= 0");
      const bool allowed = !access || (*access)(i, j) != 0;
      if (allowed && !std::isfinite(gains(i, j)))
        throw InputError(s.gains, cell(i, j) + ": gain is not a finite number");
      if (!allowed && v > 0)
        throw InputError(s.allocation,
                         cell(i, j) + ": positive entry where " + s.access + " forbids the pair");
    }
  }
  if (!(p.sum() > 0)) throw InputError(s.allocation, "has no positive entry");
}

std::string list_of(const std::vector<Eigen::Index>& indices) {
  std::ostringstream out;
  for (std::size_t k = 0; k < indices.size(); ++k) {
    if (k == 8) {
      out << ", ...";
      break;
    }
    out << (k ? ", " : "") << indices[k] + 1;
  }
  return out.str();
}

std::string drop_note(const ObservedAllocation& o, const std::string& source) {
  std::string note;
  if (!o.dropped_rows.empty())
    note += std::to_string(o.dropped_rows.size()) + " all-zero row(s) of " + source +
            " left out (" + list_of(o.dropped_rows) + ")";
  if (!o.dropped_columns.empty())
    note += std::string(note.empty() ? "" : "; ") + std::to_string(o.dropped_columns.size()) +
            " all-zero column(s) of " + source + " left out (" + list_of(o.dropped_columns) + ")";
  return note;
}

bool whole(double v) { return v == std::round(v); }

// Counts must be whole numbers; the first that is not is named.
void require_whole(const Matrix& p, const std::string& source) {
  for (Eigen::Index i = 0; i < p.rows(); ++i)
    for (Eigen::Index j = 0; j < p.cols(); ++j)
      if (!whole(p(i, j)))
        throw InputError(source, cell(i, j) + " holds " + format_number(p(i, j)) +
                                     ", not a whole number; counts (values = counts) are whole "
                                     "numbers; read fractions as shares (values = shares)");
}

// More than half of the non-zero cells above kLargeCellValue.
bool mostly_large(const Matrix& p) {
  const auto nonzero = (p.array() > 0).count();
  return 2 * (p.array() > kLargeCellValue).count() > nonzero;
}

std::string units_phrase(double units) {
  std::ostringstream out;
  out.precision(6);
  out << units;
  return out.str();
}

// Sets counts, units, reading and warning.
void read_values(const Matrix& p, const ValueReading& r, const std::string& source,
                 ObservedAllocation& o) {
  const bool all_whole = (p.array() == p.array().round()).all();
  if (r.kind == ValueKind::counts) require_whole(p, source);
  o.counts = r.kind == ValueKind::counts || (r.kind == ValueKind::automatic && all_whole);
  o.units = o.counts ? p.sum() : r.units;
  const std::string n = units_phrase(o.units);
  if (o.counts)
    o.reading = "counts" +
                std::string(r.kind == ValueKind::automatic ? " (every cell whole)" : "") +
                ": N = " + n + " independent units";
  else if (o.units > 0)
    o.reading = "shares observed on N = " + n + " independent units (units = N)";
  else
    o.reading = std::string("shares") + (all_whole ? " (values = shares)" : " (cells not whole)") +
                ": no unit count, so no standard error or interval";
  if (o.counts && (o.units > kLargeUnitCount || mostly_large(p)))
    o.warning = "the cells are read as counts of N = " + n +
                " independent choices and the intervals assume exactly that; if they are money "
                "or measurements rather than tallies, read them as shares (values = shares, "
                "with units = N for the number of independent choices behind them)";
  else if (!o.counts && o.units > kLargeUnitCount)
    o.warning = "the intervals assume N = " + n +
                " independent choices (units = N); that many is rarely true of field data";
}

}  // namespace

constexpr EnumWord<ValueKind> kValueKindWords[] = {{ValueKind::automatic, "automatic"},
                                                   {ValueKind::counts, "counts"},
                                                   {ValueKind::shares, "shares"}};

std::string to_string(ValueKind value) { return word_of(value, kValueKindWords); }

ValueKind value_kind_from_string(const std::string& text) {
  return value_of(text, kValueKindWords, "values");
}

std::vector<std::string> value_kind_words() { return words_of(kValueKindWords); }

void ValueReading::validate() const {
  if (!(units >= 0) || !std::isfinite(units))
    throw InputError("units", "must be a finite number > 0");
  if (units > 0 && kind == ValueKind::counts)
    throw InputError("units",
                     "applies to shares; counts are their own number of units (their sum)");
}

double ObservedAllocation::observed_gain() const {
  return problem.gains.cwiseProduct(shares).sum();
}

ObservedAllocation observe_allocation(const Matrix& allocation, const std::optional<Matrix>& gains,
                                      const std::optional<AccessMask>& access,
                                      const AllocationSources& sources,
                                      const ValueReading& reading) {
  reading.validate();
  check_entries(allocation, gains, access, sources);
  ObservedAllocation o;
  o.sources = sources;
  o.has_gains = gains.has_value();
  read_values(allocation, reading, sources.allocation, o);
  const Vector rows = allocation.rowwise().sum();
  const Vector cols = allocation.colwise().sum().transpose();
  for (Eigen::Index i = 0; i < rows.size(); ++i)
    (rows(i) > 0 ? o.kept_rows : o.dropped_rows).push_back(i);
  for (Eigen::Index j = 0; j < cols.size(); ++j)
    (cols(j) > 0 ? o.kept_columns : o.dropped_columns).push_back(j);
  o.note = drop_note(o, sources.allocation);
  o.shares = restrict_to_kept(allocation, o) / allocation.sum();
  o.problem.gains =
      gains ? restrict_to_kept(*gains, o) : Matrix::Zero(o.shares.rows(), o.shares.cols()).eval();
  if (access) {
    AccessMask kept(o.kept_rows.size(), o.kept_columns.size());
    for (std::size_t a = 0; a < o.kept_rows.size(); ++a)
      for (std::size_t b = 0; b < o.kept_columns.size(); ++b)
        kept(a, b) = (*access)(o.kept_rows[a], o.kept_columns[b]);
    o.problem.access = kept;
    for (Eigen::Index k = 0; k < o.problem.gains.size(); ++k)
      if (kept.data()[k] == 0) o.problem.gains.data()[k] = 0;  // unused; keeps sums finite
  }
  o.problem.budgets = o.shares.rowwise().sum();
  o.problem.capacities = o.shares.colwise().sum().transpose();
  return o;
}

Matrix restrict_to_kept(const Matrix& full, const ObservedAllocation& o) {
  Matrix kept(o.kept_rows.size(), o.kept_columns.size());
  for (std::size_t a = 0; a < o.kept_rows.size(); ++a)
    for (std::size_t b = 0; b < o.kept_columns.size(); ++b)
      kept(a, b) = full(o.kept_rows[a], o.kept_columns[b]);
  return kept;
}

Matrix expand_to_input(const Matrix& kept, const ObservedAllocation& o, Eigen::Index rows,
                       Eigen::Index columns) {
  Matrix full = Matrix::Zero(rows, columns);
  for (std::size_t a = 0; a < o.kept_rows.size(); ++a)
    for (std::size_t b = 0; b < o.kept_columns.size(); ++b)
      full(o.kept_rows[a], o.kept_columns[b]) = kept(a, b);
  return full;
}

}  // namespace allocsim
