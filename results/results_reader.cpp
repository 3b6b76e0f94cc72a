#include "allocsim/results/results_reader.hpp"

#include <algorithm>
#include <cstdlib>
#include <filesystem>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/results_file.hpp"

namespace allocsim {
namespace {

AttributeValue read_attribute(const H5::Attribute& attribute) {
  switch (attribute.getDataType().getClass()) {
    case H5T_STRING: {
      std::string text;
      attribute.read(attribute.getStrType(), text);
      return text;
    }
    case H5T_INTEGER: {
      long long value = 0;
      attribute.read(H5::PredType::NATIVE_LLONG, &value);
      return value;
    }
    case H5T_FLOAT: {
      double value = 0;
      attribute.read(H5::PredType::NATIVE_DOUBLE, &value);
      return value;
    }
    default:
      return std::string("(unsupported type)");
  }
}

std::vector<hsize_t> shape_of(const H5::DataSet& dataset) {
  const H5::DataSpace space = dataset.getSpace();
  std::vector<hsize_t> dims(static_cast<std::size_t>(space.getSimpleExtentNdims()));
  space.getSimpleExtentDims(dims.data());
  return dims;
}

std::vector<std::string> member_names(const H5::Group& group) {
  std::vector<std::string> names;
  for (hsize_t k = 0; k < group.getNumObjs(); ++k) names.push_back(group.getObjnameByIdx(k));
  std::sort(names.begin(), names.end());
  return names;
}

}  // namespace

Attributes read_attributes(const H5::H5Object& object) {
  Attributes attributes;
  for (int k = 0; k < object.getNumAttrs(); ++k) {
    const H5::Attribute attribute = object.openAttribute(static_cast<unsigned>(k));
    attributes.emplace_back(attribute.getName(), read_attribute(attribute));
  }
  return attributes;
}

std::optional<double> attribute_number(const Attributes& attributes, const std::string& name) {
  for (const auto& [key, value] : attributes) {
    if (key != name) continue;
    if (const auto* d = std::get_if<double>(&value)) return *d;
    if (const auto* i = std::get_if<long long>(&value)) return static_cast<double>(*i);
    const std::string& text = std::get<std::string>(value);
    char* end = nullptr;
    const double parsed = std::strtod(text.c_str(), &end);
    if (!text.empty() && *end == '\0') return parsed;
    return std::nullopt;
  }
  return std::nullopt;
}

std::string attribute_text(const Attributes& attributes, const std::string& name) {
  for (const auto& [key, value] : attributes) {
    if (key != name) continue;
    if (const auto* d = std::get_if<double>(&value)) return format_number(*d);
    if (const auto* i = std::get_if<long long>(&value)) return std::to_string(*i);
    return std::get<std::string>(value);
  }
  return "";
}

ResultsReader::ResultsReader(const std::string& path) : path_(path) {
  H5::Exception::dontPrint();
  if (!std::filesystem::is_regular_file(path)) {
    throw InputError(path, "cannot be read (does the file exist?)");
  }
  bool hdf5 = false;
  try {
    hdf5 = H5::H5File::isHdf5(path);
  } catch (const H5::Exception&) {
  }
  if (!hdf5) {
    throw InputError(path, "is not an HDF5 file (or cannot be read); give a results file "
                           "written by allocsim simulate or allocsim run");
  }
  try {
    file_ = H5::H5File(path, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    throw InputError(path, "cannot be opened as HDF5 (truncated or damaged?)");
  }
  const std::string format = attribute_text(root_attributes(), "format");
  if (format != kResultsFormat) {
    throw InputError(path, "is HDF5 but not an allocsim results file (its format attribute is '" +
                               format + "', expected '" + kResultsFormat + "')");
  }
}

Attributes ResultsReader::root_attributes() const { return read_attributes(file_); }

std::vector<std::string> ResultsReader::runs() const {
  if (!file_.nameExists("runs")) return {};
  return member_names(file_.openGroup("runs"));
}

void ResultsReader::require_run(const std::string& run) const {
  const auto names = runs();
  if (std::find(names.begin(), names.end(), run) != names.end()) return;
  std::string listing;
  for (std::size_t k = 0; k < names.size() && k < 5; ++k) listing += (k ? ", " : "") + names[k];
  if (names.size() > 5) listing += ", ...";
  throw InputError(path_, "holds no run '" + run + "' (it holds " +
                              (names.empty() ? std::string("no runs") : listing) + ")");
}

Attributes ResultsReader::run_attributes(const std::string& run) const {
  require_run(run);
  return read_attributes(file_.openGroup("runs/" + run));
}

Attributes ResultsReader::group_attributes(const std::string& run,
                                           const std::string& path) const {
  if (!has(run, path)) return {};
  return read_attributes(file_.openGroup("runs/" + run + "/" + path));
}

bool ResultsReader::has(const std::string& run, const std::string& path) const {
  const std::string full = "runs/" + run + "/" + path;
  // nameExists checks one link at a time: walk the path.
  std::string prefix;
  std::size_t begin = 0;
  for (;;) {
    const std::size_t slash = full.find('/', begin);
    prefix = full.substr(0, slash);
    if (!file_.nameExists(prefix)) return false;
    if (slash == std::string::npos) return true;
    begin = slash + 1;
  }
}

H5::DataSet ResultsReader::open_dataset(const std::string& run, const std::string& path) const {
  if (!has(run, path)) throw InputError(path_, "run " + run + " holds no dataset '" + path + "'");
  return file_.openDataSet("runs/" + run + "/" + path);
}

Matrix ResultsReader::read_matrix(const std::string& run, const std::string& path) const {
  const H5::DataSet dataset = open_dataset(run, path);
  const auto dims = shape_of(dataset);
  if (dims.size() != 2) throw InputError(path_, run + "/" + path + " is not a matrix");
  Matrix values(static_cast<Eigen::Index>(dims[0]), static_cast<Eigen::Index>(dims[1]));
  dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
  return values;
}

Vector ResultsReader::read_vector(const std::string& run, const std::string& path) const {
  const H5::DataSet dataset = open_dataset(run, path);
  const auto dims = shape_of(dataset);
  if (dims.size() != 1) throw InputError(path_, run + "/" + path + " is not a vector");
  Vector values(static_cast<Eigen::Index>(dims[0]));
  dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
  return values;
}

long ResultsReader::snapshot_count(const std::string& run) const {
  if (!has(run, "allocation/snapshots")) return 0;
  return static_cast<long>(shape_of(open_dataset(run, "allocation/snapshots"))[0]);
}

Matrix ResultsReader::read_snapshot(const std::string& run, long k) const {
  const H5::DataSet dataset = open_dataset(run, "allocation/snapshots");
  const auto dims = shape_of(dataset);
  if (k < 0 || static_cast<hsize_t>(k) >= dims[0]) {
    throw InputError(path_, run + " has " + std::to_string(dims[0]) + " snapshots, not " +
                                std::to_string(k + 1));
  }
  H5::DataSpace file_space = dataset.getSpace();
  const hsize_t start[3] = {static_cast<hsize_t>(k), 0, 0};
  const hsize_t count[3] = {1, dims[1], dims[2]};
  file_space.selectHyperslab(H5S_SELECT_SET, count, start);
  const H5::DataSpace memory_space(3, count);
  Matrix values(static_cast<Eigen::Index>(dims[1]), static_cast<Eigen::Index>(dims[2]));
  dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE, memory_space, file_space);
  return values;
}

TransportProblem ResultsReader::read_scenario(const std::string& run) const {
  TransportProblem problem;
  problem.gains = read_matrix(run, "scenario/gains");
  problem.budgets = read_vector(run, "scenario/budgets");
  problem.capacities = read_vector(run, "scenario/capacities");
  if (has(run, "scenario/access")) {
    const H5::DataSet dataset = open_dataset(run, "scenario/access");
    AccessMask access(problem.gains.rows(), problem.gains.cols());
    dataset.read(access.data(), H5::PredType::NATIVE_UINT8);
    problem.access = std::move(access);
  }
  return problem;
}

std::vector<std::pair<std::string, std::vector<double>>> ResultsReader::summary_numbers() const {
  std::vector<std::pair<std::string, std::vector<double>>> columns;
  if (!file_.nameExists("summary")) return columns;
  const H5::Group summary = file_.openGroup("summary");
  for (const auto& name : member_names(summary)) {
    const H5::DataSet dataset = summary.openDataSet(name);
    if (dataset.getDataType().getClass() == H5T_STRING) continue;
    std::vector<double> values(static_cast<std::size_t>(shape_of(dataset)[0]));
    dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
    columns.emplace_back(name, std::move(values));
  }
  return columns;
}

std::vector<std::pair<std::string, std::vector<std::string>>> ResultsReader::summary_texts() const {
  std::vector<std::pair<std::string, std::vector<std::string>>> columns;
  if (!file_.nameExists("summary")) return columns;
  const H5::Group summary = file_.openGroup("summary");
  for (const auto& name : member_names(summary)) {
    const H5::DataSet dataset = summary.openDataSet(name);
    if (dataset.getDataType().getClass() != H5T_STRING) continue;
    const hsize_t rows = shape_of(dataset)[0];
    std::vector<char*> raw(rows);
    dataset.read(raw.data(), dataset.getStrType());
    std::vector<std::string> values(raw.begin(), raw.end());
    H5::DataSet::vlenReclaim(raw.data(), dataset.getStrType(), dataset.getSpace());
    columns.emplace_back(name, std::move(values));
  }
  return columns;
}

}  // namespace allocsim
