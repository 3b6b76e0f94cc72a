#include "allocsim/results/results_reader.hpp"

#include <algorithm>
#include <cstdlib>
#include <filesystem>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "hdf5_io.hpp"

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

Attributes read_attributes(const H5::H5Object& object) {
  Attributes attributes;
  for (int k = 0; k < object.getNumAttrs(); ++k) {
    const H5::Attribute attribute = object.openAttribute(static_cast<unsigned>(k));
    attributes.emplace_back(attribute.getName(), read_attribute(attribute));
  }
  return attributes;
}

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
  for (const auto& name : member_names(group)) {
    const H5O_type_t kind = group.childObjType(name);
    if (kind == H5O_TYPE_GROUP) {
      collect_datasets(group.openGroup(name), prefix + name + "/", out);
    } else if (kind == H5O_TYPE_DATASET) {
      const H5::DataSet ds = group.openDataSet(name);
      DatasetInfo info{prefix + name, type_name(ds), {}};
      for (const hsize_t d : shape_of(ds)) info.shape.push_back(d);
      out.push_back(std::move(info));
    }
  }
}

std::string run_path(const std::string& run) { return std::string(layout::kRuns) + "/" + run; }

}  // namespace

struct ResultsReader::File {
  H5::H5File file;
};

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

ResultsReader::ResultsReader(const std::string& path) : path_(path), file_(std::make_unique<File>()) {
  silence_hdf5_diagnostics();
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
    file_->file = H5::H5File(path, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    throw InputError(path, "cannot be opened as HDF5 (truncated or damaged?)");
  }
  const Attributes root = root_attributes();
  const std::string format = attribute_text(root, layout::kFormatAttribute);
  if (format != layout::kResultsFormat) {
    throw InputError(path, "is HDF5 but not an allocsim results file (its format attribute is '" +
                               format + "', expected '" + layout::kResultsFormat + "')");
  }
  const auto version = attribute_number(root, layout::kFormatVersion);
  if (version && *version > static_cast<double>(layout::kResultsFormatVersion)) {
    throw InputError(path, "is of results format version " + attribute_text(root, layout::kFormatVersion) +
                               ", newer than this allocsim reads (" +
                               std::to_string(layout::kResultsFormatVersion) +
                               "); use a newer allocsim");
  }
}

ResultsReader::~ResultsReader() = default;
ResultsReader::ResultsReader(ResultsReader&&) noexcept = default;

Attributes ResultsReader::root_attributes() const { return read_attributes(file_->file); }

std::vector<std::string> ResultsReader::runs() const {
  return read_guarded(path_, [&]() -> std::vector<std::string> {
    if (!file_->file.nameExists(layout::kRuns)) return {};
    return member_names(file_->file.openGroup(layout::kRuns));
  });
}

void ResultsReader::require_run(const std::string& run) const {
  return read_guarded(path_, [&]() -> void {
    const auto names = runs();
    if (std::find(names.begin(), names.end(), run) != names.end()) return;
    std::string listing;
    for (std::size_t k = 0; k < names.size() && k < 5; ++k) listing += (k ? ", " : "") + names[k];
    if (names.size() > 5) listing += ", ...";
    throw InputError(path_, "holds no run '" + run + "' (it holds " +
                                (names.empty() ? std::string("no runs") : listing) + ")");
  });
}

Attributes ResultsReader::run_attributes(const std::string& run) const {
  return read_guarded(path_, [&]() -> Attributes {
    require_run(run);
    return read_attributes(file_->file.openGroup(run_path(run)));
  });
}

Attributes ResultsReader::group_attributes(const std::string& run,
                                           const std::string& path) const {
  if (!has(run, path)) return {};
  return read_attributes(file_->file.openGroup(run_path(run) + "/" + path));
}

std::vector<DatasetInfo> ResultsReader::datasets(const std::string& run) const {
  return read_guarded(path_, [&]() -> std::vector<DatasetInfo> {
    require_run(run);
    std::vector<DatasetInfo> out;
    collect_datasets(file_->file.openGroup(run_path(run)), "", out);
    return out;
  });
}

bool ResultsReader::has(const std::string& run, const std::string& path) const {
  return read_guarded(path_, [&]() -> bool {
    const std::string full = run_path(run) + "/" + path;
    // nameExists checks one link at a time: walk the path.
    std::string prefix;
    std::size_t begin = 0;
    for (;;) {
      const std::size_t slash = full.find('/', begin);
      prefix = full.substr(0, slash);
      if (!file_->file.nameExists(prefix)) return false;
      if (slash == std::string::npos) return true;
      begin = slash + 1;
    }
  });
}

namespace {

H5::DataSet open_dataset(const ResultsReader& reader, const H5::H5File& file,
                         const std::string& run, const std::string& path) {
  if (!reader.has(run, path))
    throw InputError(reader.path(), "run " + run + " holds no dataset '" + path + "'");
  return file.openDataSet(run_path(run) + "/" + path);
}

}  // namespace

Matrix ResultsReader::read_matrix(const std::string& run, const std::string& path) const {
  return read_guarded(path_, [&]() -> Matrix {
    const H5::DataSet dataset = open_dataset(*this, file_->file, run, path);
    const auto dims = shape_of(dataset);
    if (dims.size() != 2) throw InputError(path_, run + "/" + path + " is not a matrix");
    Matrix values(static_cast<Eigen::Index>(dims[0]), static_cast<Eigen::Index>(dims[1]));
    dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
    return values;
  });
}

Vector ResultsReader::read_vector(const std::string& run, const std::string& path) const {
  return read_guarded(path_, [&]() -> Vector {
    const H5::DataSet dataset = open_dataset(*this, file_->file, run, path);
    const auto dims = shape_of(dataset);
    if (dims.size() != 1) throw InputError(path_, run + "/" + path + " is not a vector");
    Vector values(static_cast<Eigen::Index>(dims[0]));
    dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
    return values;
  });
}

long ResultsReader::snapshot_count(const std::string& run) const {
  return read_guarded(path_, [&]() -> long {
    if (!has(run, layout::kSnapshots)) return 0;
    return static_cast<long>(shape_of(open_dataset(*this, file_->file, run, layout::kSnapshots))[0]);
  });
}

Matrix ResultsReader::read_snapshot(const std::string& run, long k) const {
  return read_guarded(path_, [&]() -> Matrix {
    const H5::DataSet dataset = open_dataset(*this, file_->file, run, layout::kSnapshots);
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
  });
}

TransportProblem ResultsReader::read_scenario(const std::string& run) const {
  return read_guarded(path_, [&]() -> TransportProblem {
    TransportProblem problem;
    problem.gains = read_matrix(run, layout::kGains);
    problem.budgets = read_vector(run, layout::kBudgets);
    problem.capacities = read_vector(run, layout::kCapacities);
    if (has(run, layout::kAccess)) {
      const H5::DataSet dataset = open_dataset(*this, file_->file, run, layout::kAccess);
      AccessMask access(problem.gains.rows(), problem.gains.cols());
      dataset.read(access.data(), H5::PredType::NATIVE_UINT8);
      problem.access = std::move(access);
    }
    return problem;
  });
}

std::vector<std::string> ResultsReader::read_texts(const std::string& run,
                                                  const std::string& path) const {
  if (!has(run, path)) return {};
  const H5::DataSet dataset = open_dataset(*this, file_->file, run, path);
  if (dataset.getDataType().getClass() != H5T_STRING || shape_of(dataset).size() != 1) {
    throw InputError(path_, run + "/" + path + " is not a list of texts");
  }
  return read_text_dataset(dataset);
}

std::vector<DatasetInfo> ResultsReader::summary_columns() const {
  return read_guarded(path_, [&]() -> std::vector<DatasetInfo> {
    std::vector<DatasetInfo> out;
    if (file_->file.nameExists(layout::kSummary))
      collect_datasets(file_->file.openGroup(layout::kSummary), "", out);
    return out;
  });
}

std::vector<std::pair<std::string, std::vector<double>>> ResultsReader::summary_numbers() const {
  return read_guarded(path_, [&]() -> std::vector<std::pair<std::string, std::vector<double>>> {
    std::vector<std::pair<std::string, std::vector<double>>> columns;
    if (!file_->file.nameExists(layout::kSummary)) return columns;
    const H5::Group summary = file_->file.openGroup(layout::kSummary);
    for (const auto& name : member_names(summary)) {
      const H5::DataSet dataset = summary.openDataSet(name);
      if (dataset.getDataType().getClass() == H5T_STRING) continue;
      std::vector<double> values(static_cast<std::size_t>(shape_of(dataset)[0]));
      dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
      columns.emplace_back(name, std::move(values));
    }
    return columns;
  });
}

std::vector<std::pair<std::string, std::vector<std::string>>> ResultsReader::summary_texts() const {
  return read_guarded(path_, [&]() -> std::vector<std::pair<std::string, std::vector<std::string>>> {
    std::vector<std::pair<std::string, std::vector<std::string>>> columns;
    if (!file_->file.nameExists(layout::kSummary)) return columns;
    const H5::Group summary = file_->file.openGroup(layout::kSummary);
    for (const auto& name : member_names(summary)) {
      const H5::DataSet dataset = summary.openDataSet(name);
      if (dataset.getDataType().getClass() != H5T_STRING) continue;
      columns.emplace_back(name, read_text_dataset(dataset));
    }
    return columns;
  });
}

}  // namespace allocsim
