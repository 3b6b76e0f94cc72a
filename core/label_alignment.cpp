#include "allocsim/core/label_alignment.hpp"

#include <algorithm>
#include <unordered_map>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

// "'a', 'b', 'c'" (at most eight, then "and N more").
std::string quoted_list(const std::vector<std::string>& labels) {
  std::string out;
  const std::size_t shown = std::min<std::size_t>(labels.size(), 8);
  for (std::size_t k = 0; k < shown; ++k) out += (k ? ", '" : "'") + labels[k] + "'";
  if (labels.size() > shown) out += " and " + std::to_string(labels.size() - shown) + " more";
  return out;
}

std::unordered_map<std::string, Eigen::Index> positions(const std::vector<std::string>& labels) {
  std::unordered_map<std::string, Eigen::Index> where;
  for (std::size_t k = 0; k < labels.size(); ++k)
    where.emplace(labels[k], static_cast<Eigen::Index>(k));
  return where;
}

// The labels of `labels` that `in` lacks, in file order.
std::vector<std::string> missing_from(const std::vector<std::string>& labels,
                                      const std::unordered_map<std::string, Eigen::Index>& in) {
  std::vector<std::string> missing;
  for (const std::string& label : labels)
    if (!in.count(label)) missing.push_back(label);
  return missing;
}

std::vector<Eigen::Index> identity(Eigen::Index count) {
  std::vector<Eigen::Index> order(static_cast<std::size_t>(count));
  for (Eigen::Index k = 0; k < count; ++k) order[static_cast<std::size_t>(k)] = k;
  return order;
}

void require_same_count(const LabelSide& reference, const LabelSide& other,
                        const std::string& side) {
  if (reference.count == other.count) return;
  const std::string noun = other.noun.empty() ? side + "s" : other.noun;
  const std::string reference_noun = reference.noun.empty() ? side + "s" : reference.noun;
  throw InputError(other.source, "holds " + std::to_string(other.count) + " " + noun + " but " +
                                     reference.source + " has " + std::to_string(reference.count) +
                                     " " + reference_noun + "; they must match one to one");
}

LabelAlignment by_position(const LabelSide& reference, const LabelSide& other) {
  LabelAlignment a;
  a.matching = LabelMatching::by_position;
  a.order = identity(reference.count);
  if (reference.labels.empty() && other.labels.empty())
    a.description = "matched by position (neither file has labels)";
  else
    a.description = "matched by position (only " +
                    (reference.labels.empty() ? other.source : reference.source) + " has labels)";
  return a;
}

}  // namespace

constexpr EnumWord<LabelMatching> kLabelMatchingWords[] = {
    {LabelMatching::by_label, "by-label"}, {LabelMatching::by_position, "by-position"}};

std::string to_string(LabelMatching value) { return word_of(value, kLabelMatchingWords); }

void require_unique_labels(const std::vector<std::string>& labels, const std::string& source,
                           const std::string& side) {
  std::unordered_map<std::string, std::size_t> first;
  for (std::size_t k = 0; k < labels.size(); ++k) {
    const auto [at, inserted] = first.emplace(labels[k], k);
    if (!inserted)
      throw InputError(source, side + " label '" + labels[k] + "' occurs twice (" + side + "s " +
                                   std::to_string(at->second + 1) + " and " +
                                   std::to_string(k + 1) + "); each " + side +
                                   " must have its own label");
  }
}

LabelAlignment align_labels(const LabelSide& reference, const LabelSide& other,
                            const std::string& side) {
  require_unique_labels(reference.labels, reference.source, side);
  require_unique_labels(other.labels, other.source, side);
  if (reference.labels.empty() || other.labels.empty()) {
    require_same_count(reference, other, side);
    return by_position(reference, other);
  }
  const auto in_other = positions(other.labels);
  const auto in_reference = positions(reference.labels);
  const std::vector<std::string> only_reference = missing_from(reference.labels, in_other);
  const std::vector<std::string> only_other = missing_from(other.labels, in_reference);
  if (!only_reference.empty() || !only_other.empty()) {
    std::string what = side + " labels differ from those of " + reference.source + ":";
    if (!only_other.empty())
      what += " only in " + other.source + ": " + quoted_list(only_other) + ";";
    if (!only_reference.empty())
      what += " only in " + reference.source + ": " + quoted_list(only_reference) + ";";
    what.back() = '.';
    throw InputError(other.source, what + " Rows and columns are matched by label");
  }
  LabelAlignment a;
  a.matching = LabelMatching::by_label;
  for (const std::string& label : reference.labels) a.order.push_back(in_other.at(label));
  a.reordered = a.order != identity(reference.count);
  a.description = a.reordered ? "matched by label (reordered)" : "matched by label";
  return a;
}

std::string align_matrix(const LabeledMatrix& reference, const std::string& reference_source,
                         LabeledMatrix& other, const std::string& other_source) {
  const auto labelled = [](const LabeledMatrix& m) {
    return !m.row_labels.empty() && !m.column_labels.empty();
  };
  const auto shape = [](const Matrix& m) {
    return std::to_string(m.rows()) + " x " + std::to_string(m.cols());
  };
  if ((other.values.rows() != reference.values.rows() ||
       other.values.cols() != reference.values.cols()) &&
      !(labelled(reference) && labelled(other)))
    throw InputError(other_source, "is " + shape(other.values) + " but " + reference_source +
                                       " is " + shape(reference.values) +
                                       "; both must be agents x partners");
  const LabelAlignment rows =
      align_labels({reference.row_labels, reference.values.rows(), reference_source},
                   {other.row_labels, other.values.rows(), other_source}, "row");
  const LabelAlignment columns =
      align_labels({reference.column_labels, reference.values.cols(), reference_source},
                   {other.column_labels, other.values.cols(), other_source}, "column");
  other.values = reorder_columns(reorder_rows(other.values, rows.order), columns.order);
  other.row_labels = reorder_labels(other.row_labels, rows.order);
  other.column_labels = reorder_labels(other.column_labels, columns.order);
  return other_source + ": rows " + rows.description + "; columns " + columns.description;
}

Vector reorder_entries(const Vector& values, const std::vector<Eigen::Index>& order) {
  Vector out(static_cast<Eigen::Index>(order.size()));
  for (std::size_t k = 0; k < order.size(); ++k)
    out(static_cast<Eigen::Index>(k)) = values(order[k]);
  return out;
}

std::vector<std::string> reorder_labels(const std::vector<std::string>& labels,
                                        const std::vector<Eigen::Index>& order) {
  if (labels.empty()) return {};
  std::vector<std::string> out;
  for (const Eigen::Index k : order) out.push_back(labels[static_cast<std::size_t>(k)]);
  return out;
}

}  // namespace allocsim
