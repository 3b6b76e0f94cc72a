// allocsim inspect: what a results file holds (runs, parameters, datasets).
#include <iostream>
#include <sstream>
#include <variant>

#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

std::string text_of(const AttributeValue& value) {
  if (const auto* text = std::get_if<std::string>(&value)) return *text;
  if (const auto* integer = std::get_if<long long>(&value)) return std::to_string(*integer);
  return format_number(std::get<double>(value));
}

std::string shape_text(const std::vector<unsigned long long>& shape) {
  if (shape.empty()) return "scalar";
  std::string text;
  for (const auto d : shape) text += (text.empty() ? "" : " x ") + std::to_string(d);
  return text;
}

const AttributeValue* find(const Attributes& attributes, const std::string& name) {
  for (const auto& [key, value] : attributes) {
    if (key == name) return &value;
  }
  return nullptr;
}

std::string attribute_text(const Attributes& attributes, const std::string& name) {
  const AttributeValue* value = find(attributes, name);
  return value ? text_of(*value) : "?";
}

JsonObject attributes_json(const Attributes& attributes) {
  JsonObject json;
  for (const auto& [key, value] : attributes) {
    if (const auto* text = std::get_if<std::string>(&value)) json.add(key, *text);
    else if (const auto* integer = std::get_if<long long>(&value)) json.add(key, *integer);
    else json.add(key, std::get<double>(value));
  }
  return json;
}

JsonObject datasets_json(const std::vector<DatasetInfo>& datasets) {
  JsonObject json;
  for (const auto& d : datasets) {
    std::vector<double> shape(d.shape.begin(), d.shape.end());
    json.add(d.path, JsonObject().add("type", d.type).add("shape", shape));
  }
  return json;
}

void print_listing(const ResultsReader& reader, bool show_experiment) {
  const Attributes root = reader.root_attributes();
  std::cout << reader.path() << ": " << attribute_text(root, layout::kFormatAttribute) << " format "
            << attribute_text(root, layout::kFormatVersion) << ", written by allocsim "
            << attribute_text(root, layout::kToolVersion) << " at "
            << attribute_text(root, layout::kCreatedUtc) << "\n";
  if (show_experiment) {
    std::cout << "\nexperiment:\n" << attribute_text(root, layout::kExperiment) << "\n";
  }
  const auto names = reader.runs();
  std::cout << "\nruns: " << names.size() << "\n";
  for (const auto& name : names) {
    const Attributes attributes = reader.run_attributes(name);
    std::cout << "\n" << name << " (status " << attribute_text(attributes, layout::kStatus) << ")\n"
              << "  parameters:\n";
    for (const auto& [key, value] : attributes) {
      std::cout << "    " << key << " = " << text_of(value) << "\n";
    }
    std::cout << "  datasets:\n";
    for (const auto& d : reader.datasets(name)) {
      std::cout << "    " << d.path << std::string(d.path.size() < 24 ? 24 - d.path.size() : 1, ' ')
                << d.type << "  " << shape_text(d.shape) << "\n";
    }
  }
  const std::vector<DatasetInfo> columns = reader.summary_columns();
  if (!columns.empty()) {
    const auto rows = columns.front().shape.empty() ? 0 : columns.front().shape[0];
    std::cout << "\nsummary: " << rows << (rows == 1 ? " row, " : " rows, ") << columns.size() << " columns\n";
  }
}

void print_json(const ResultsReader& reader) {
  const Attributes root = reader.root_attributes();
  JsonObject json;
  json.add("file", reader.path());
  for (const auto& name : {layout::kFormatAttribute, layout::kFormatVersion, layout::kToolVersion,
                           layout::kCreatedUtc, layout::kExperiment}) {
    if (const AttributeValue* value = find(root, name)) {
      if (const auto* text = std::get_if<std::string>(value)) json.add(name, *text);
      else json.add(name, text_of(*value));
    }
  }
  JsonObject runs_json;
  for (const auto& name : reader.runs()) {
    runs_json.add(name, JsonObject()
                            .add("attributes", attributes_json(reader.run_attributes(name)))
                            .add("datasets", datasets_json(reader.datasets(name))));
  }
  json.add("runs", runs_json);
  const std::vector<DatasetInfo> columns = reader.summary_columns();
  if (!columns.empty()) json.add("summary", datasets_json(columns));
  std::cout << json.str() << "\n";
}

}  // namespace

int inspect_command(const Arguments& args) {
  po::options_description options("inspect options");
  options.add_options()
      ("file", po::value<std::string>()->required(), "results file (HDF5)")
      ("experiment", "also print the experiment text")
      ("json", "print one JSON object on stdout");
  po::positional_options_description positional;
  positional.add("file", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "inspect", "FILE.h5 [--json] [--experiment]")) {
    return kExitOk;
  }
  const std::string path = vm["file"].as<std::string>();
  const ResultsReader reader(path);
  if (vm.count("json")) print_json(reader);
  else print_listing(reader, vm.count("experiment") > 0);
  return kExitOk;
}

}  // namespace allocsim::cli
