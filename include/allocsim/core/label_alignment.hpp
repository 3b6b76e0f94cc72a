// Matching the rows (or columns) of one file to those of another by label.
//
// Labels are data: when two files both label their rows, row "Bombus" of
// one is row "Bombus" of the other, wherever it stands. The rule:
//
//   both files labelled   the label sets must be equal; the other file's
//                         rows are put in the reference file's order. Sets
//                         that differ are an InputError naming the labels
//                         found in only one of the files.
//   one file labelled     the counts must agree; rows are matched by
//                         position (and the caller says so in its report).
//   neither labelled      the counts must agree; matched by position.
//
// Labels duplicated within one file are an InputError naming the label and
// both of its positions (counted from 1), whether or not another file is
// matched against it. Labels compare as exact strings (after the CSV reader's
// trimming of surrounding spaces).
#pragma once

#include <string>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

// The labels of one side (rows or columns) of one file.
struct LabelSide {
  const std::vector<std::string>& labels;  // empty when the file has none
  Eigen::Index count;                      // rows (or columns) the file holds
  std::string source;                      // the file, for messages
  std::string noun = "";                   // what it counts, for messages (e.g. "budgets");
                                           // empty: "rows" or "columns"
};

enum class LabelMatching { by_label, by_position };
// Words: "by-label", "by-position".
std::string to_string(LabelMatching matching);

struct LabelAlignment {
  LabelMatching matching = LabelMatching::by_position;
  // order[k] = index, in the other file, of the reference's k-th row.
  std::vector<Eigen::Index> order;
  bool reordered = false;  // order is not the identity

  // One phrase for reports, e.g. "matched by label (reordered)" or
  // "matched by position (only P.csv has labels)".
  std::string description;
};

// Throws InputError(source, ...) when a label occurs twice. `side` is "row"
// or "column" (used in the message).
void require_unique_labels(const std::vector<std::string>& labels, const std::string& source,
                           const std::string& side);

// Matches `other` to `reference` by the rule above. `side` is "row" or
// "column". Throws InputError(other.source, ...) on duplicate labels, label
// sets that differ, or counts that differ.
LabelAlignment align_labels(const LabelSide& reference, const LabelSide& other,
                            const std::string& side);

// Puts the rows and columns of `other` (values and labels) in the order of
// `reference`'s, by align_labels on each side. Shapes that differ are an
// InputError naming both shapes unless both sides are labelled in both files
// (then the labels that differ are named). Returns one phrase for
// reports, e.g. "G.csv: rows matched by label (reordered); columns matched
// by label".
std::string align_matrix(const LabeledMatrix& reference, const std::string& reference_source,
                         LabeledMatrix& other, const std::string& other_source);

// The rows (columns) of `values` picked in `order`: result row k = row order[k].
template <class MatrixType>
MatrixType reorder_rows(const MatrixType& values, const std::vector<Eigen::Index>& order) {
  MatrixType out(static_cast<Eigen::Index>(order.size()), values.cols());
  for (std::size_t k = 0; k < order.size(); ++k)
    out.row(static_cast<Eigen::Index>(k)) = values.row(order[k]);
  return out;
}
template <class MatrixType>
MatrixType reorder_columns(const MatrixType& values, const std::vector<Eigen::Index>& order) {
  MatrixType out(values.rows(), static_cast<Eigen::Index>(order.size()));
  for (std::size_t k = 0; k < order.size(); ++k)
    out.col(static_cast<Eigen::Index>(k)) = values.col(order[k]);
  return out;
}
Vector reorder_entries(const Vector& values, const std::vector<Eigen::Index>& order);
std::vector<std::string> reorder_labels(const std::vector<std::string>& labels,
                                        const std::vector<Eigen::Index>& order);

}  // namespace allocsim
