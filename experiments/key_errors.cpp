#include "key_errors.hpp"

namespace allocsim::detail {

std::string key_place(const ExperimentValues& values, const std::string& section,
                      const std::string& field,
                      std::initializer_list<std::pair<const char*, const char*>> renamed) {
  std::string key = section + "." + field;
  for (const auto& [from, to] : renamed)
    if (field == from) key = to;
  if (!find_experiment_key(key)) return field;
  if (!values.given(key)) return key;
  const std::string& where = values.where(key);
  return where == "--" + key ? where : where + ": " + key;
}

}  // namespace allocsim::detail
