// Errors of a lower layer under the experiment's key names.
//
// sim/ and analysis/ validate their options and name the field
// ("temperature", "samples"); the experiment layer owns the keys
// ("dynamics.temperature", "analysis.null_samples") and where each was given
// ("exp.ini:4", "--dynamics.temperature").
#pragma once

#include <initializer_list>
#include <string>
#include <utility>

#include "allocsim/core/error.hpp"
#include "allocsim/experiments/keys.hpp"

namespace allocsim::detail {

// The place of the key `section.field` (or of renamed[field]): where it was
// given followed by the key ("exp.ini:4: dynamics.rounds", or
// "--dynamics.rounds"), the key alone when it was left at its default, and
// `field` unchanged when no such key exists (a file name, say).
std::string key_place(const ExperimentValues& values, const std::string& section,
                      const std::string& field,
                      std::initializer_list<std::pair<const char*, const char*>> renamed = {});

// Calls check(); an InputError it throws is re-thrown at key_place(its where()).
template <class Check>
void check_as_keys(const ExperimentValues& values, const std::string& section, Check&& check,
                   std::initializer_list<std::pair<const char*, const char*>> renamed = {}) {
  check_under_names(std::forward<Check>(check), [&](const std::string& field) {
    return key_place(values, section, field, renamed);
  });
}

}  // namespace allocsim::detail
