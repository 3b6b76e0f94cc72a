// allocsim inspect: what a results file holds (runs, parameters, datasets).
#include <algorithm>
#include <iostream>
#include <map>
#include <sstream>
#include <variant>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
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
    if (const auto* text = std::get_if<std::string>(&value))
      json.add(key, *text);
    else if (const auto* integer = std::get_if<long long>(&value))
      json.add(key, *integer);
    else
      json.add(key, std::get<double>(value));
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
    std::cout << "\n"
              << name << " (status " << attribute_text(attributes, layout::kStatus) << ")\n"
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
    std::cout << "\nsummary: " << rows << (rows == 1 ? " row, " : " rows, ") << columns.size()
              << " columns\n";
  }
}

// At most this many values of a varying parameter are listed in the short view.
constexpr std::size_t kValuesShown = 8;

std::string joined(const std::vector<std::string>& values, std::size_t most) {
  std::string text;
  for (std::size_t k = 0; k < values.size() && k < most; ++k) text += (k ? ", " : "") + values[k];
  if (values.size() > most) text += ", ... (" + std::to_string(values.size()) + " values)";
  return text;
}

// The short view: runs and their status, the parameters that vary across
// runs (with their values), how many are the same, and the summary columns.
void print_short(const ResultsReader& reader) {
  const Attributes root = reader.root_attributes();
  const auto names = reader.runs();
  std::cout << reader.path() << ": " << names.size() << (names.size() == 1 ? " run" : " runs")
            << ", written by allocsim " << attribute_text(root, layout::kToolVersion) << " at "
            << attribute_text(root, layout::kCreatedUtc) << "\n";
  std::map<std::string, std::vector<std::string>> values;  // distinct values in run order
  std::vector<std::string> order;
  std::map<std::string, long> status, settled;
  for (const auto& name : names) {
    const Attributes attributes = reader.run_attributes(name);
    ++status[attribute_text(attributes, layout::kStatus)];
    ++settled[attribute_text(attributes, layout::kSettled)];
    for (const auto& [key, value] : attributes) {
      if (!values.count(key)) order.push_back(key);
      auto& seen = values[key];
      const std::string text = text_of(value);
      if (std::find(seen.begin(), seen.end(), text) == seen.end()) seen.push_back(text);
    }
  }
  std::cout << "status:";
  for (const auto& [word, count] : status) std::cout << " " << count << " " << word;
  if (settled.count("false") || settled.count("true")) {
    std::cout << "; settled: " << settled["true"] << " of " << names.size();
  }
  std::cout << "\n";
  long same = 0;
  std::vector<std::string> varying;
  for (const auto& key : order) {
    // Per-run identities and timings always differ; they are not parameters.
    if (key == layout::kRunIndex || key == layout::kSeconds || key == layout::kCapacityError ||
        key == layout::kWindowChange || key == layout::kDriftSinceBurnIn) {
      continue;
    }
    if (values[key].size() > 1)
      varying.push_back(key);
    else
      ++same;
  }
  std::cout << "parameters that vary:" << (varying.empty() ? " none" : "") << "\n";
  for (const auto& key : varying) {
    std::cout << "  " << key << ": " << joined(values[key], kValuesShown) << "\n";
  }
  std::cout << same << " more parameters take one value in every run (--all lists every run)\n";
  const std::vector<DatasetInfo> columns = reader.summary_columns();
  if (!columns.empty()) {
    std::vector<std::string> column_names;
    for (const auto& c : columns) column_names.push_back(c.path);
    std::cout << "summary columns (" << columns.size()
              << "): " << joined(column_names, columns.size()) << "\n";
  }
  if (!names.empty()) {
    std::cout << "datasets of " << names.front() << ":";
    for (const auto& d : reader.datasets(names.front()))
      std::cout << " " << d.path << " (" << shape_text(d.shape) << ")";
    std::cout << "\n";
  }
}

void print_json(const ResultsReader& reader) {
  const Attributes root = reader.root_attributes();
  JsonObject json;
  json.add("file", reader.path());
  for (const auto& name : {layout::kFormatAttribute, layout::kFormatVersion, layout::kToolVersion,
                           layout::kCreatedUtc, layout::kExperiment}) {
    if (const AttributeValue* value = find(root, name)) {
      if (const auto* text = std::get_if<std::string>(value))
        json.add(name, *text);
      else
        json.add(name, text_of(*value));
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
  options.add_options()("file", po::value<std::string>()->required(), "results file (HDF5)")(
      "all", "list every run with every parameter and dataset (default: a short view)")(
      "experiment", "also print the experiment text")("json", "print one JSON object on stdout");
  po::positional_options_description positional;
  positional.add("file", 1);
  po::variables_map vm;
  if (!parse_or_help(
          args, options, positional, vm, "inspect",
          "FILE.h5 [--all] [--json] [--experiment]\n\n"
          "A short view by default: runs, the parameters that vary, the summary columns. "
          "--all lists every run's parameters and datasets.")) {
    return kExitOk;
  }
  const std::string path = vm["file"].as<std::string>();
  const ResultsReader reader(path);
  if (vm.count("json"))
    print_json(reader);
  else if (vm.count("all"))
    print_listing(reader, vm.count("experiment") > 0);
  else {
    print_short(reader);
    if (vm.count("experiment")) {
      std::cout << "\nexperiment:\n"
                << attribute_text(reader.root_attributes(), layout::kExperiment) << "\n";
    }
  }
  return kExitOk;
}

}  // namespace allocsim::cli
