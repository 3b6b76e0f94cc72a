#include "allocsim/analysis/trait_features.hpp"

#include <cmath>
#include <utility>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

std::string trait_name(const TraitTable& table, Eigen::Index k) {
  return static_cast<std::size_t>(k) < table.names.size() ? table.names[k]
                                                          : "trait " + std::to_string(k + 1);
}

void require_usable(const TraitTable& table) {
  if (table.values.cols() == 0 || table.values.rows() == 0)
    throw InputError(table.source, "holds no trait values");
  for (Eigen::Index i = 0; i < table.values.rows(); ++i)
    for (Eigen::Index k = 0; k < table.values.cols(); ++k)
      if (!std::isfinite(table.values(i, k)))
        throw InputError(table.source, "row " + std::to_string(i + 1) + ", trait '" +
                                           trait_name(table, k) + "' is not a finite number");
}

std::vector<std::pair<Eigen::Index, Eigen::Index>> paired_traits(const TraitTable& rows,
                                                                 const TraitTable& columns) {
  std::vector<std::pair<Eigen::Index, Eigen::Index>> pairs;
  for (Eigen::Index a = 0; a < rows.values.cols(); ++a)
    for (Eigen::Index b = 0; b < columns.values.cols(); ++b)
      if (trait_name(rows, a) == trait_name(columns, b)) pairs.emplace_back(a, b);
  if (!pairs.empty()) return pairs;
  for (Eigen::Index a = 0; a < rows.values.cols(); ++a)
    for (Eigen::Index b = 0; b < columns.values.cols(); ++b) pairs.emplace_back(a, b);
  return pairs;
}

std::string feature_name(const std::string& x, const std::string& y, TraitFeatureForm form) {
  if (form == TraitFeatureForm::product) return x + "*" + y;
  return x == y ? "-(" + x + ")^2" : "-(" + x + "-" + y + ")^2";
}

}  // namespace

constexpr EnumWord<TraitFeatureForm> kTraitFeatureFormWords[] = {
    {TraitFeatureForm::negative_squared_distance, "distance"},
    {TraitFeatureForm::product, "product"}};

std::string to_string(TraitFeatureForm value) { return word_of(value, kTraitFeatureFormWords); }

TraitFeatureForm trait_feature_form_from_string(const std::string& text) {
  return value_of(text, kTraitFeatureFormWords, "trait feature form");
}

std::vector<std::string> trait_feature_form_words() { return words_of(kTraitFeatureFormWords); }

TraitFeatures build_trait_features(const TraitTable& row_traits, const TraitTable& column_traits,
                                   TraitFeatureForm form) {
  require_usable(row_traits);
  require_usable(column_traits);
  TraitFeatures out;
  for (const auto& [a, b] : paired_traits(row_traits, column_traits)) {
    const Vector x = row_traits.values.col(a);
    const Vector y = column_traits.values.col(b);
    Matrix f(x.size(), y.size());
    for (Eigen::Index i = 0; i < x.size(); ++i)
      for (Eigen::Index j = 0; j < y.size(); ++j)
        f(i, j) = form == TraitFeatureForm::product ? x(i) * y(j) : -(x(i) - y(j)) * (x(i) - y(j));
    out.features.push_back(std::move(f));
    out.names.push_back(
        feature_name(trait_name(row_traits, a), trait_name(column_traits, b), form));
  }
  return out;
}

}  // namespace allocsim
