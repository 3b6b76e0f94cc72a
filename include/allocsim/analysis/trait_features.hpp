// Feature matrices of trait matching, built from traits of the rows and of
// the columns (e.g. a plant's corolla depth and a pollinator's tongue length).
//
// For a row trait x (one value per row) and a column trait y (one per
// column) the two usual forms are
//   product:                    F_ij = x_i * y_j
//   negative squared distance:  F_ij = -(x_i - y_j)^2.
// Only what is left of a feature after removing row and column constants is
// identified (gains_fit.hpp), and -(x_i - y_j)^2 = 2 x_i y_j - x_i^2 - y_j^2
// differs from twice the product only by such constants: the two forms carry
// the same information, and a weight b on the distance form equals a weight
// 2b on the product form. Giving both for the same pair is therefore refused
// as collinear by the fit; choose one form (the distance form reads as
// "matching": a positive weight favours rows and columns of similar trait).
//
// Pairing: a row trait and a column trait are paired when they carry the
// same name; when the two tables share no name, every row trait is paired
// with every column trait. Features are named after their traits,
// "x*y" (product) or "-(x-y)^2" (distance), or "-(x)^2" when both are named x.
#pragma once

#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

// One column per trait, one row per row (or column) of the allocation.
struct TraitTable {
  Matrix values;                   // entities x traits
  std::vector<std::string> names;  // one per trait; "trait 1", ... when empty
  std::string source = "traits";   // for messages (e.g. the file name)
};

enum class TraitFeatureForm { product, negative_squared_distance };
// Words: "distance", "product".
std::string to_string(TraitFeatureForm form);
// Throws InputError("trait feature form", ...) listing the valid words.
TraitFeatureForm trait_feature_form_from_string(const std::string& text);
std::vector<std::string> trait_feature_form_words();

struct TraitFeatures {
  std::vector<Matrix> features;    // rows x columns each
  std::vector<std::string> names;  // one per feature
};

// Throws InputError naming the source for a non-finite trait value or a
// table without traits. Row and column counts are those of the tables.
TraitFeatures build_trait_features(
    const TraitTable& row_traits, const TraitTable& column_traits,
    TraitFeatureForm form = TraitFeatureForm::negative_squared_distance);

}  // namespace allocsim
