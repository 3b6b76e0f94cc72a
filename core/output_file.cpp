#include "allocsim/core/output_file.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <cerrno>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <map>
#include <mutex>

#include "allocsim/core/error.hpp"

namespace allocsim {
// atomic_file.cpp: a path removed by the SIGINT / SIGTERM handler.
void remove_on_exit_signal(const std::string& path);
namespace fs = std::filesystem;
namespace {

std::string describe(mode_t mode) {
  if (S_ISDIR(mode)) return "a directory";
  if (S_ISFIFO(mode)) return "a FIFO";
  if (S_ISCHR(mode)) return "a character device";
  if (S_ISBLK(mode)) return "a block device";
  if (S_ISSOCK(mode)) return "a socket";
  return "not a regular file";
}

// The path a chain of symlinks leads to (at most 40 links, like the kernel).
std::string follow_links(const std::string& path) {
  fs::path current = path;
  for (int hops = 0; hops < 40; ++hops) {
    std::error_code error;
    if (!fs::is_symlink(fs::symlink_status(current, error))) return current.string();
    fs::path next = fs::read_symlink(current, error);
    if (error) return current.string();
    current = next.is_absolute() ? next : current.parent_path() / next;
  }
  throw InputError(path, "is a loop of symbolic links");
}

bool process_is_gone(long pid) {
  if (pid <= 0) return false;
  return ::kill(static_cast<pid_t>(pid), 0) != 0 && errno == ESRCH;
}

// The pid of a "<prefix>.tmp-<pid>" name, or -1.
long temporary_pid(const std::string& name, const std::string& prefix) {
  const std::string marker = prefix + ".tmp-";
  if (name.size() <= marker.size() || name.compare(0, marker.size(), marker) != 0) return -1;
  const std::string digits = name.substr(marker.size());
  if (digits.find_first_not_of("0123456789") != std::string::npos || digits.size() > 9) return -1;
  return std::stol(digits);
}

std::string read_small_file(int fd) {
  char text[256] = {0};
  const ssize_t n = ::pread(fd, text, sizeof text - 1, 0);
  std::string content = n > 0 ? std::string(text, static_cast<std::size_t>(n)) : "";
  while (!content.empty() && (content.back() == '\n' || content.back() == ' ')) content.pop_back();
  return content;
}

// The inputs read so far: (device, inode) -> the path as given.
std::mutex inputs_mutex;
std::map<std::pair<dev_t, ino_t>, std::string>& remembered_inputs() {
  static std::map<std::pair<dev_t, ino_t>, std::string> inputs;
  return inputs;
}

}  // namespace

void remember_input(const std::string& path) {
  struct stat info {};
  if (::stat(path.c_str(), &info) != 0 || !S_ISREG(info.st_mode)) return;
  const std::lock_guard<std::mutex> guard(inputs_mutex);
  remembered_inputs().emplace(std::make_pair(info.st_dev, info.st_ino), path);
}

void require_not_an_input(const std::string& output, const std::string& label) {
  struct stat info {};
  if (::stat(output.c_str(), &info) != 0 || !S_ISREG(info.st_mode)) return;
  const std::lock_guard<std::mutex> guard(inputs_mutex);
  const auto found = remembered_inputs().find(std::make_pair(info.st_dev, info.st_ino));
  if (found == remembered_inputs().end()) return;
  throw InputError(label, "is also an input of this command (" + found->second +
                              "); it would be overwritten: choose another name");
}

ResolvedOutput resolve_output(const std::string& path) {
  ResolvedOutput out;
  out.path = follow_links(path);
  struct stat info {};
  if (::stat(out.path.c_str(), &info) != 0) {
    out.kind = OutputKind::absent;
    return out;
  }
  if (S_ISREG(info.st_mode)) {
    out.kind = OutputKind::regular;
  } else if (S_ISDIR(info.st_mode)) {
    out.kind = OutputKind::directory;
  } else if (S_ISCHR(info.st_mode) || S_ISFIFO(info.st_mode)) {
    out.kind = OutputKind::device_or_fifo;
  } else {
    out.kind = OutputKind::other;
  }
  out.described = describe(info.st_mode);
  return out;
}

ResolvedOutput require_regular_output(const std::string& path, const std::string& label) {
  const ResolvedOutput out = resolve_output(path);
  if (out.kind == OutputKind::directory) {
    throw InputError(label, path + " is a directory; name a results file to write");
  }
  if (out.kind != OutputKind::absent && out.kind != OutputKind::regular) {
    throw InputError(label, path + " is " + out.described +
                                ", not a regular file; results files are written only to "
                                "regular files");
  }
  return out;
}

bool same_file(const std::string& a, const std::string& b) {
  if (a.empty() || b.empty()) return false;
  std::error_code error;
  if (fs::exists(a, error) && fs::exists(b, error)) return fs::equivalent(a, b, error);
  const fs::path ca = fs::weakly_canonical(fs::absolute(follow_links(a)), error);
  const fs::path cb = fs::weakly_canonical(fs::absolute(follow_links(b)), error);
  return !error && ca == cb;
}

void require_distinct(const std::string& output, const std::string& output_label,
                      const std::vector<std::pair<std::string, std::string>>& others) {
  for (const auto& [label, path] : others) {
    if (!same_file(output, path)) continue;
    throw InputError(output_label, output + " is also " + label + " (" + path +
                                       "); it would be overwritten: choose another name");
  }
}

int remove_orphan_temporaries(const std::string& path) {
  const fs::path target = follow_links(path);
  const fs::path folder = target.parent_path().empty() ? fs::path(".") : target.parent_path();
  const std::string base = target.filename().string();
  int removed = 0;
  std::error_code error;
  for (const auto& entry : fs::directory_iterator(folder, error)) {
    const std::string name = entry.path().filename().string();
    if (process_is_gone(temporary_pid(name, base)) && fs::remove(entry.path(), error)) ++removed;
  }
  return removed;
}

int remove_orphan_temporaries_in(const std::string& folder) {
  int removed = 0;
  std::error_code error;
  for (const auto& entry : fs::directory_iterator(folder, error)) {
    const std::string name = entry.path().filename().string();
    const auto at = name.rfind(".tmp-");
    if (at == std::string::npos) continue;
    if (process_is_gone(temporary_pid(name, name.substr(0, at))) &&
        fs::remove(entry.path(), error)) {
      ++removed;
    }
  }
  return removed;
}

std::string write_failure_cause(const std::string& path, const std::string& detail, int error) {
  if (error == ENOSPC || error == EDQUOT || error == EIO || error == EROFS || error == EFBIG) {
    return std::strerror(error);
  }
  const fs::path target = follow_links(path);
  const fs::path folder = target.parent_path().empty() ? fs::path(".") : target.parent_path();
  struct statvfs disk {};
  if (::statvfs(folder.c_str(), &disk) == 0 &&
      static_cast<double>(disk.f_bavail) * static_cast<double>(disk.f_frsize) < 1e6) {
    return std::strerror(ENOSPC);
  }
  return detail;
}

NewFolder::NewFolder(const std::string& folder, const std::string& label) {
  std::error_code error;
  for (fs::path missing = fs::absolute(folder, error).lexically_normal();
       !missing.empty() && !fs::exists(missing, error) && missing != missing.parent_path();
       missing = missing.parent_path()) {
    if (!missing.filename().empty()) created_.push_back(missing.string());
  }
  fs::create_directories(folder, error);
  if (error || !fs::is_directory(folder)) {
    created_.clear();
    throw InputError(label, (label == folder ? std::string() : folder + ": ") +
                                "cannot be created as a folder (" +
                                (error ? error.message() : std::string("a file has that name")) +
                                ")");
  }
}

NewFolder::~NewFolder() {
  std::error_code error;
  for (const auto& folder : created_) {
    if (!fs::is_empty(folder, error) || !fs::remove(folder, error)) break;
  }
}

OutputLock::OutputLock(const std::string& path) : lock_path_(follow_links(path) + ".lock") {
  for (int attempt = 0; attempt < 10; ++attempt) {
    fd_ = ::open(lock_path_.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd_ < 0) {
      throw InputError(path, std::string("cannot be locked for writing (") + std::strerror(errno) +
                                 "); check that the folder exists and is writable");
    }
    if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
      const std::string holder = read_small_file(fd_);
      ::close(fd_);
      fd_ = -1;
      throw InputError(path, "is being written by another allocsim (" +
                                 (holder.empty() ? std::string("pid unknown") : holder) +
                                 "); wait for it to finish or stop it");
    }
    // The holder before us may have removed the file after we opened it:
    // hold the lock only on the file the name still leads to.
    struct stat held {
    }, named{};
    if (::fstat(fd_, &held) == 0 && ::stat(lock_path_.c_str(), &named) == 0 &&
        held.st_ino == named.st_ino && held.st_dev == named.st_dev) {
      const std::time_t now = std::time(nullptr);
      std::tm local{};
      localtime_r(&now, &local);
      char since[32];
      std::strftime(since, sizeof since, "%Y-%m-%d %H:%M:%S", &local);
      const std::string text = "pid " + std::to_string(::getpid()) + ", since " + since + "\n";
      remove_on_exit_signal(lock_path_);
      if (::ftruncate(fd_, 0) == 0) {
        [[maybe_unused]] const auto written = ::pwrite(fd_, text.data(), text.size(), 0);
      }
      return;
    }
    ::close(fd_);
    fd_ = -1;
  }
  throw InputError(path, "cannot be locked for writing (its lock file keeps changing)");
}

OutputLock::~OutputLock() {
  if (fd_ < 0) return;
  ::unlink(lock_path_.c_str());
  ::close(fd_);
}

}  // namespace allocsim
