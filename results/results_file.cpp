#include "allocsim/results/results_file.hpp"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/hdf5_io.hpp"

namespace allocsim {

std::string run_name(long index) {
  char name[32];
  std::snprintf(name, sizeof name, "run-%06ld", index);
  return name;
}

std::string utc_timestamp() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

ResultsFile::ResultsFile(std::string path, const std::string& experiment_text,
                         const std::string& tool_version)
    : path_(std::move(path)), temporary_(temporary_name_for(path_)) {
  try {
    file_ = H5::H5File(temporary_, H5F_ACC_TRUNC);
  } catch (const H5::Exception&) {
    std::remove(temporary_.c_str());
    throw InputError(path_, "cannot be written; check that the folder exists and is writable");
  }
  set_text_attribute(file_, "format", kResultsFormat);
  set_integer_attribute(file_, "format_version", kResultsFormatVersion);
  set_text_attribute(file_, "tool_version", tool_version);
  set_text_attribute(file_, "created_utc", utc_timestamp());
  set_text_attribute(file_, "experiment", experiment_text);
  file_.createGroup("runs");
}

ResultsFile::~ResultsFile() {
  if (committed_) return;
  try {
    file_.close();
  } catch (const H5::Exception&) {
  }
  std::remove(temporary_.c_str());
}

H5::Group ResultsFile::create_run(const std::string& name) {
  return file_.createGroup("/runs/" + name);
}

void ResultsFile::write_summary(const SummaryTable& table) {
  H5::Group summary = file_.createGroup("summary");
  for (const auto& [name, column] : table.texts) write_texts(summary, name, column);
  for (const auto& [name, column] : table.numbers) {
    write_vector(summary, name, Eigen::Map<const Vector>(column.data(), static_cast<Eigen::Index>(column.size())));
  }
}

void ResultsFile::commit() {
  file_.flush(H5F_SCOPE_GLOBAL);
  file_.close();
  if (std::rename(temporary_.c_str(), path_.c_str()) != 0) {
    const std::string reason = std::strerror(errno);
    std::remove(temporary_.c_str());
    throw InputError(path_, "could not be written (" + reason + ")");
  }
  committed_ = true;
}

}  // namespace allocsim
