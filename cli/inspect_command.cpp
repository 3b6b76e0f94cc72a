// allocsim inspect: what a results file holds (runs, parameters, datasets).
#include <H5Cpp.h>

#include <iostream>
#include <sstream>
#include <variant>

#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

struct DatasetInfo {
  std::string path;  // relative to the group listed
  std::string type;  // float64, int64, uint8, text, ...
  std::vector<hsize_t> shape;
};

std::string type_name(const H5::DataSet& ds) {
  const H5::DataType type = ds.getDataType();
  switch (type.getClass()) {
    case H5T_FLOAT:
      return "float" + std::to_string(8 * type.getSize());
    case H5T_INTEGER: {
      const bool is_signed = ds.getIntType().getSign() != H5T_SGN_NONE;
      return std::string(is_signed ? "int" : "uint") + std::to_string(8 * type.getSize());
    }
    case H5T_STRING:
      return "text";
    default:
      return "other";
  }
}

void collect_datasets(const H5::Group& group, const std::string& prefix,
                      std::vector<DatasetInfo>& out) {
  for (hsize_t k = 0; k < group.getNumObjs(); ++k) {
    const std::string name = group.getObjnameByIdx(k);
    const std::string path = prefix.empty() ? name : prefix + "/" + name;
    const H5O_type_t kind = group.childObjType(name);
    if (kind == H5O_TYPE_GROUP) {
      collect_datasets(group.openGroup(name), path, out);
    } else if (kind == H5O_TYPE_DATASET) {
      const H5::DataSet ds = group.openDataSet(name);
      const H5::DataSpace space = ds.getSpace();
      std::vector<hsize_t> shape(static_cast<std::size_t>(space.getSimpleExtentNdims()));
      if (!shape.empty()) space.getSimpleExtentDims(shape.data());
      out.push_back({path, type_name(ds), shape});
    }
  }
}

std::string text_of(const AttributeValue& value) {
  if (const auto* text = std::get_if<std::string>(&value)) return *text;
  if (const auto* integer = std::get_if<long long>(&value)) return std::to_string(*integer);
  return format_number(std::get<double>(value));
}

std::string shape_text(const std::vector<hsize_t>& shape) {
  if (shape.empty()) return "scalar";
  std::string text;
  for (const hsize_t d : shape) text += (text.empty() ? "" : " x ") + std::to_string(d);
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

std::vector<std::string> group_names(const H5::Group& group) {
  std::vector<std::string> names;
  for (hsize_t k = 0; k < group.getNumObjs(); ++k) names.push_back(group.getObjnameByIdx(k));
  return names;
}

void print_listing(const std::string& path, const H5::H5File& file, bool show_experiment) {
  const Attributes root = read_attributes(file);
  std::cout << path << ": " << attribute_text(root, "format") << " format "
            << attribute_text(root, "format_version") << ", written by allocsim "
            << attribute_text(root, "tool_version") << " at " << attribute_text(root, "created_utc")
            << "\n";
  if (show_experiment) {
    std::cout << "\nexperiment:\n" << attribute_text(root, "experiment") << "\n";
  }
  const H5::Group runs = file.openGroup("runs");
  const auto names = group_names(runs);
  std::cout << "\nruns: " << names.size() << "\n";
  for (const auto& name : names) {
    const H5::Group run = runs.openGroup(name);
    const Attributes attributes = read_attributes(run);
    std::cout << "\n" << name << " (status " << attribute_text(attributes, "status") << ")\n"
              << "  parameters:\n";
    for (const auto& [key, value] : attributes) {
      std::cout << "    " << key << " = " << text_of(value) << "\n";
    }
    std::vector<DatasetInfo> datasets;
    collect_datasets(run, "", datasets);
    std::cout << "  datasets:\n";
    for (const auto& d : datasets) {
      std::cout << "    " << d.path << std::string(d.path.size() < 24 ? 24 - d.path.size() : 1, ' ')
                << d.type << "  " << shape_text(d.shape) << "\n";
    }
  }
  if (file.nameExists("summary")) {
    std::vector<DatasetInfo> columns;
    collect_datasets(file.openGroup("summary"), "", columns);
    const hsize_t rows = columns.empty() || columns.front().shape.empty() ? 0 : columns.front().shape[0];
    std::cout << "\nsummary: " << rows << (rows == 1 ? " row, " : " rows, ") << columns.size() << " columns\n";
  }
}

void print_json(const std::string& path, const H5::H5File& file) {
  const Attributes root = read_attributes(file);
  JsonObject json;
  json.add("file", path);
  for (const auto& name : {"format", "format_version", "tool_version", "created_utc", "experiment"}) {
    if (const AttributeValue* value = find(root, name)) {
      if (const auto* text = std::get_if<std::string>(value)) json.add(name, *text);
      else json.add(name, text_of(*value));
    }
  }
  const H5::Group runs = file.openGroup("runs");
  JsonObject runs_json;
  for (const auto& name : group_names(runs)) {
    const H5::Group run = runs.openGroup(name);
    std::vector<DatasetInfo> datasets;
    collect_datasets(run, "", datasets);
    runs_json.add(name, JsonObject()
                            .add("attributes", attributes_json(read_attributes(run)))
                            .add("datasets", datasets_json(datasets)));
  }
  json.add("runs", runs_json);
  if (file.nameExists("summary")) {
    std::vector<DatasetInfo> columns;
    collect_datasets(file.openGroup("summary"), "", columns);
    json.add("summary", datasets_json(columns));
  }
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
  try {
    ResultsReader reader(path);
    const H5::H5File& file = reader.file();
    if (vm.count("json")) print_json(path, file);
    else print_listing(path, file, vm.count("experiment") > 0);
  } catch (const H5::Exception& e) {
    throw InputError(path, "cannot be read as a results file (" + e.getDetailMsg() + ")");
  }
  return kExitOk;
}

}  // namespace allocsim::cli
