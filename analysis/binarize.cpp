#include "allocsim/analysis/binarize.hpp"

#include <cmath>
#include <sstream>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

void check_allocation(const Matrix& allocation) {
  for (Eigen::Index i = 0; i < allocation.rows(); ++i) {
    for (Eigen::Index j = 0; j < allocation.cols(); ++j) {
      const double v = allocation(i, j);
      if (!std::isfinite(v) || v < 0) {
        throw InputError("allocation", "entry at row " + std::to_string(i + 1) + ", column " +
                                           std::to_string(j + 1) +
                                           " must be finite and non-negative");
      }
    }
  }
}

std::string format_threshold(double t) {
  std::ostringstream out;
  out << t;
  return out.str();
}

}  // namespace

constexpr EnumWord<BinarizeRule> kBinarizeRuleWords[] = {
    {BinarizeRule::positive, "positive"},
    {BinarizeRule::row_share, "row-share"},
    {BinarizeRule::min_count, "min-count"},
    {BinarizeRule::revealed_advantage, "revealed-advantage"}};

std::string to_string(BinarizeRule value) { return word_of(value, kBinarizeRuleWords); }

BinarizeRule binarize_rule_from_string(const std::string& text) {
  return value_of(text, kBinarizeRuleWords, "binarize");
}

std::vector<std::string> binarize_rule_words() { return words_of(kBinarizeRuleWords); }

double default_threshold(BinarizeRule rule) {
  switch (rule) {
    case BinarizeRule::positive:
      return 0.0;
    case BinarizeRule::row_share:
      return 0.05;
    case BinarizeRule::min_count:
      return 1.0;
    case BinarizeRule::revealed_advantage:
      return 1.0;
  }
  return 0.0;
}

void BinarizeOptions::validate() const {
  const double t = threshold_value();
  if (!std::isfinite(t)) throw InputError("threshold", "must be a finite number");
  switch (rule) {
    case BinarizeRule::positive:
      if (t < 0) throw InputError("threshold", "must be >= 0 for the rule 'positive'");
      break;
    case BinarizeRule::row_share:
      if (!(t > 0 && t <= 1)) throw InputError("threshold", "must be in (0, 1] for 'row-share'");
      break;
    case BinarizeRule::min_count:
    case BinarizeRule::revealed_advantage:
      if (!(t > 0)) throw InputError("threshold", "must be > 0 for '" + to_string(rule) + "'");
      break;
  }
}

BinaryMatrix binarize(const Matrix& allocation, const BinarizeOptions& options) {
  options.validate();
  check_allocation(allocation);
  const double t = options.threshold_value();
  const Vector rows = allocation.rowwise().sum();
  const RowVector cols = allocation.colwise().sum();
  const double total = allocation.sum();
  BinaryMatrix links = BinaryMatrix::Zero(allocation.rows(), allocation.cols());
  for (Eigen::Index i = 0; i < allocation.rows(); ++i) {
    for (Eigen::Index j = 0; j < allocation.cols(); ++j) {
      const double p = allocation(i, j);
      bool link = false;
      switch (options.rule) {
        case BinarizeRule::positive:
          link = p > t;
          break;
        case BinarizeRule::row_share:
          link = rows(i) > 0 && p / rows(i) >= t;
          break;
        case BinarizeRule::min_count:
          link = p >= t;
          break;
        case BinarizeRule::revealed_advantage:
          link = rows(i) > 0 && cols(j) > 0 && p * total / (rows(i) * cols(j)) >= t;
          break;
      }
      links(i, j) = link ? 1 : 0;
    }
  }
  return links;
}

std::string describe(const BinarizeOptions& options) {
  const std::string t = format_threshold(options.threshold_value());
  switch (options.rule) {
    case BinarizeRule::positive:
      return "link when cell > " + t + " (positive)";
    case BinarizeRule::row_share:
      return "link when cell / row total >= " + t + " (row-share)";
    case BinarizeRule::min_count:
      return "link when cell >= " + t + " (min-count)";
    case BinarizeRule::revealed_advantage:
      return "link when P_ij*sum(P)/(row_i*col_j) >= " + t + " (revealed-advantage)";
  }
  return "unknown rule";
}

Matrix to_matrix(const BinaryMatrix& links) { return links.cast<double>(); }

Eigen::VectorXi row_degrees(const BinaryMatrix& links) { return links.cast<int>().rowwise().sum(); }

Eigen::VectorXi column_degrees(const BinaryMatrix& links) {
  return links.cast<int>().colwise().sum().transpose();
}

}  // namespace allocsim
