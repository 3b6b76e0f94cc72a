#include "allocsim/results/results_file.hpp"

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/results/layout.hpp"
#include "hdf5_io.hpp"
#include "run_group.hpp"

namespace allocsim {
namespace {

// Writes a dataset at `path` below the run (groups created, an existing
// dataset of that name replaced) through write(parent, name).
template <class Write>
void replace_dataset(RunWriter::Group& run, const std::string& path, Write write) {
  write_guarded(run.path, [&]() -> void {
    const std::size_t slash = path.rfind('/');
    H5::Group parent = slash == std::string::npos
                           ? run.group
                           : open_or_create_groups(run.group, path.substr(0, slash));
    const std::string name = slash == std::string::npos ? path : path.substr(slash + 1);
    if (parent.nameExists(name)) parent.unlink(name);
    write(parent, name);
  });
}

std::string runs_path(const std::string& name) {
  return std::string("/") + layout::kRuns + "/" + name;
}

// Flushes and closes `file`, then renames `temporary` onto `target` (the
// file `path` leads to); a
// WriteError naming `path` and the cause otherwise (the caller's destructor
// abandons the file and removes the temporary).
void close_and_rename(H5::H5File& file, const std::string& temporary, const std::string& target,
                      const std::string& path) {
  write_guarded(path, [&] {
    file.flush(H5F_SCOPE_GLOBAL);
    file.close();
  });
  if (std::rename(temporary.c_str(), target.c_str()) != 0) {
    const int error = errno;
    std::remove(temporary.c_str());
    throw WriteError(path, std::strerror(error));
  }
}

// An uncommitted file: abandoned (hdf5_io.hpp), its temporary name removed.
void discard(H5::H5File& file, const std::string& temporary) {
  abandon(file);
  std::remove(temporary.c_str());
}

// The failure to create or open `temporary` for `path`: InputError when
// the folder is missing or not writable, WriteError when the disk is full.
[[noreturn]] void refuse_temporary(const std::string& path, const std::string& temporary, int error,
                                   const std::string& doing) {
  std::remove(temporary.c_str());
  const std::string cause = write_failure_cause(path, "", error);
  if (!cause.empty()) throw WriteError(path, cause);
  throw InputError(path, "cannot be " + doing + "; check that the folder exists and is writable");
}

// The writer of /runs/<name>, which exists in `file`.
RunWriter existing_run(H5::H5File& file, const std::string& name, const std::string& path) {
  return write_guarded(path, [&]() -> RunWriter {
    return RunWriter(std::make_shared<RunWriter::Group>(
        RunWriter::Group{file.openGroup(runs_path(name)), path}));
  });
}

}  // namespace

H5::Group open_or_create_groups(H5::Group group, const std::string& path) {
  std::size_t begin = 0;
  while (begin < path.size()) {
    const std::size_t slash = path.find('/', begin);
    const std::string name = path.substr(begin, slash == std::string::npos ? slash : slash - begin);
    group = group.nameExists(name) ? group.openGroup(name) : group.createGroup(name);
    if (slash == std::string::npos) break;
    begin = slash + 1;
  }
  return group;
}

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

void silence_hdf5_diagnostics() { prepare_hdf5(); }

// ---- RunWriter ----

RunWriter::RunWriter(std::shared_ptr<Group> group) : group_(std::move(group)) {}

void RunWriter::set_text(const std::string& name, const std::string& value) {
  return write_guarded(group_->path,
                       [&]() -> void { set_text_attribute(group_->group, name, value); });
}
void RunWriter::set_number(const std::string& name, double value) {
  return write_guarded(group_->path,
                       [&]() -> void { set_number_attribute(group_->group, name, value); });
}
void RunWriter::set_integer(const std::string& name, long long value) {
  return write_guarded(group_->path,
                       [&]() -> void { set_integer_attribute(group_->group, name, value); });
}

void RunWriter::write_matrix(const std::string& path, const Matrix& values) {
  replace_dataset(*group_, path, [&](H5::Group& parent, const std::string& name) {
    allocsim::write_matrix(parent, name, values);
  });
}

void RunWriter::write_vector(const std::string& path, const Vector& values) {
  replace_dataset(*group_, path, [&](H5::Group& parent, const std::string& name) {
    allocsim::write_vector(parent, name, values);
  });
}

void RunWriter::write_scenario(const TransportProblem& problem) {
  return write_guarded(group_->path, [&]() -> void {
    H5::Group scenario = open_or_create_groups(group_->group, layout::kScenario);
    allocsim::write_matrix(scenario, leaf_name(layout::kGains), problem.gains);
    allocsim::write_vector(scenario, leaf_name(layout::kBudgets), problem.budgets);
    allocsim::write_vector(scenario, leaf_name(layout::kCapacities), problem.capacities);
    if (problem.access) write_access(scenario, leaf_name(layout::kAccess), *problem.access);
  });
}

void RunWriter::write_labels(const std::vector<std::string>& agents,
                             const std::vector<std::string>& partners) {
  if (agents.empty() && partners.empty()) return;
  H5::Group labels = open_or_create_groups(group_->group, layout::kLabels);
  if (!agents.empty()) write_texts(labels, leaf_name(layout::kAgentLabels), agents);
  if (!partners.empty()) write_texts(labels, leaf_name(layout::kPartnerLabels), partners);
}

// ---- ResultsFile ----

struct ResultsFile::File {
  H5::H5File file;
};

ResultsFile::ResultsFile(std::string path, const std::string& experiment_text,
                         const std::string& tool_version)
    : path_(std::move(path)),
      target_(require_regular_output(path_, path_).path),
      temporary_(temporary_name_for(target_)),
      file_(std::make_unique<File>()) {
  silence_hdf5_diagnostics();
  require_not_an_input(target_, path_);
  try {
    errno = 0;
    file_->file = H5::H5File(temporary_, H5F_ACC_TRUNC);
  } catch (const H5::Exception&) {
    refuse_temporary(path_, temporary_, errno, "written");
  }
  write_guarded(path_, [&] {
    H5::H5File& f = file_->file;
    set_text_attribute(f, layout::kFormatAttribute, layout::kResultsFormat);
    set_integer_attribute(f, layout::kFormatVersion, layout::kResultsFormatVersion);
    set_text_attribute(f, layout::kToolVersion, tool_version);
    set_text_attribute(f, layout::kCreatedUtc, utc_timestamp());
    set_text_attribute(f, layout::kExperiment, experiment_text);
    f.createGroup(layout::kRuns);
  });
}

ResultsFile::~ResultsFile() {
  if (!committed_) discard(file_->file, temporary_);
}

RunWriter ResultsFile::create_run(const std::string& name) {
  return write_guarded(path_, [&]() -> RunWriter {
    return RunWriter(std::make_shared<RunWriter::Group>(
        RunWriter::Group{file_->file.createGroup(runs_path(name)), path_}));
  });
}

RunWriter ResultsFile::run(const std::string& name) {
  return existing_run(file_->file, name, path_);
}

void ResultsFile::copy_run_from(const std::string& other_path, const std::string& run) {
  const std::string source = runs_path(run);
  const H5::H5File other =
      read_guarded(other_path, [&] { return H5::H5File(other_path, H5F_ACC_RDONLY); });
  errno = 0;
  if (H5Ocopy(other.getId(), source.c_str(), file_->file.getId(), source.c_str(), H5P_DEFAULT,
              H5P_DEFAULT) < 0) {
    const int error = errno;
    throw WriteError(
        path_, write_failure_cause(
                   path_, "HDF5: copying " + source + " of " + other_path + " failed", error));
  }
}

void ResultsFile::write_summary(const SummaryTable& table) {
  return write_guarded(path_, [&]() -> void {
    H5::Group summary = file_->file.createGroup(layout::kSummary);
    for (const auto& [name, column] : table.texts) write_texts(summary, name, column);
    for (const auto& [name, column] : table.numbers) {
      write_vector(
          summary, name,
          Eigen::Map<const Vector>(column.data(), static_cast<Eigen::Index>(column.size())));
    }
  });
}

void ResultsFile::commit() {
  close_and_rename(file_->file, temporary_, target_, path_);
  committed_ = true;
}

// ---- ResultsUpdate ----

struct ResultsUpdate::File {
  H5::H5File file;
};

ResultsUpdate::ResultsUpdate(std::string path)
    : path_(std::move(path)),
      target_(require_regular_output(path_, path_).path),
      temporary_(temporary_name_for(target_)),
      file_(std::make_unique<File>()) {
  silence_hdf5_diagnostics();
  std::error_code error;
  std::filesystem::copy_file(target_, temporary_, std::filesystem::copy_options::overwrite_existing,
                             error);
  if (error) {
    // The file was read before: what fails is writing its copy.
    std::remove(temporary_.c_str());
    throw WriteError(path_, write_failure_cause(path_, error.message(), error.value()));
  }
  try {
    errno = 0;
    file_->file = H5::H5File(temporary_, H5F_ACC_RDWR);
  } catch (const H5::Exception&) {
    refuse_temporary(path_, temporary_, errno, "opened for writing");
  }
}

ResultsUpdate::~ResultsUpdate() {
  if (!committed_) discard(file_->file, temporary_);
}

RunWriter ResultsUpdate::run(const std::string& name) {
  return existing_run(file_->file, name, path_);
}

void ResultsUpdate::commit() {
  close_and_rename(file_->file, temporary_, target_, path_);
  committed_ = true;
}

}  // namespace allocsim
