#include "allocsim/core/atomic_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <vector>

#include "allocsim/core/error.hpp"
#include "allocsim/core/output_file.hpp"

namespace allocsim {
namespace {

// Names of this process's temporary files, for the signal handler: a ring of
// slots, each an owned C string; the oldest is reused when all are taken (a
// stale name only costs an unlink of a missing file).
constexpr int kTemporarySlots = 1024;
std::atomic<char*> temporary_slots[kTemporarySlots];
std::atomic<unsigned> next_temporary_slot{0};

void remember_temporary(const std::string& name) {
  char* copy = strdup(name.c_str());
  const unsigned slot = next_temporary_slot.fetch_add(1) % kTemporarySlots;
  char* old = temporary_slots[slot].exchange(copy);
  std::free(old);
}

extern "C" void exit_on_signal(int signal_number) {
  remove_temporaries_and_exit(128 + signal_number);
}

}  // namespace

// An output buffer on a file descriptor that remembers the first errno.
class AtomicFile::Buffer : public std::streambuf {
 public:
  explicit Buffer(int fd) : fd_(fd), data_(1 << 16) {
    setp(data_.data(), data_.data() + data_.size());
  }
  ~Buffer() override {
    if (fd_ >= 0) ::close(fd_);
  }
  int error() const { return error_; }
  // Flushes and closes; false (error() set) on failure.
  bool finish(bool sync) {
    bool ok = drain();
    if (ok && sync && ::fsync(fd_) != 0 && errno != EINVAL && errno != EROFS) ok = fail();
    if (::close(fd_) != 0 && ok) ok = fail();
    fd_ = -1;
    return ok;
  }

 protected:
  int_type overflow(int_type c) override {
    if (!drain()) return traits_type::eof();
    if (!traits_type::eq_int_type(c, traits_type::eof())) {
      *pptr() = traits_type::to_char_type(c);
      pbump(1);
    }
    return traits_type::not_eof(c);
  }
  int sync() override { return drain() ? 0 : -1; }

 private:
  bool fail() {
    if (!error_) error_ = errno ? errno : EIO;
    return false;
  }
  bool drain() {
    if (error_) return false;
    const char* begin = pbase();
    while (begin < pptr()) {
      const ssize_t written = ::write(fd_, begin, static_cast<std::size_t>(pptr() - begin));
      if (written < 0 && errno == EINTR) continue;
      if (written <= 0) return fail();
      begin += written;
    }
    setp(data_.data(), data_.data() + data_.size());
    return true;
  }
  int fd_;
  int error_ = 0;
  std::vector<char> data_;
};

void remove_on_exit_signal(const std::string& path) { remember_temporary(path); }

std::string temporary_name_for(const std::string& path) {
  std::string name = path + ".tmp-" + std::to_string(::getpid());
  remember_temporary(name);
  return name;
}

void remove_temporaries_and_exit(int code) {
  for (auto& slot : temporary_slots) {
    const char* name = slot.load();
    if (name) ::unlink(name);
  }
  std::_Exit(code);
}

void exit_cleanly_on_signals() {
  std::signal(SIGINT, exit_on_signal);
  std::signal(SIGTERM, exit_on_signal);
}

AtomicFile::AtomicFile(std::string path) : path_(std::move(path)) {
  const ResolvedOutput target = resolve_output(path_);
  target_ = target.path;
  int fd = -1;
  mode_t mode = 0666;
  if (target.kind == OutputKind::device_or_fifo) {
    fd = ::open(target_.c_str(), O_WRONLY | O_CLOEXEC);  // written through, never replaced
  } else if (target.kind == OutputKind::regular || target.kind == OutputKind::absent) {
    require_not_an_input(target_, path_);
    struct stat existing {};
    if (target.kind == OutputKind::regular && ::stat(target_.c_str(), &existing) == 0) {
      mode = existing.st_mode & 07777;
    }
    temporary_ = temporary_name_for(target_);
    fd = ::open(temporary_.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0666);
    if (fd >= 0 && target.kind == OutputKind::regular) ::fchmod(fd, mode);
  } else {
    throw InputError(path_, "is " + target.described + "; name a file to write");
  }
  if (fd < 0) {
    throw InputError(path_, std::string("cannot be written (") + std::strerror(errno) +
                                "); check that the folder exists and is writable");
  }
  buffer_ = std::make_unique<Buffer>(fd);
  out_ = std::make_unique<std::ostream>(buffer_.get());
}

AtomicFile::~AtomicFile() {
  if (committed_) return;
  out_.reset();
  if (buffer_) buffer_->finish(false);
  if (!temporary_.empty()) std::remove(temporary_.c_str());
}

void AtomicFile::commit() {
  out_->flush();
  const bool ok = buffer_->finish(!temporary_.empty());
  if (!ok) {
    const int error = buffer_->error();
    if (!temporary_.empty()) std::remove(temporary_.c_str());
    committed_ = true;
    throw WriteError(path_, std::strerror(error));
  }
  if (!temporary_.empty() && std::rename(temporary_.c_str(), target_.c_str()) != 0) {
    const int error = errno;
    std::remove(temporary_.c_str());
    committed_ = true;
    throw WriteError(path_, std::strerror(error));
  }
  committed_ = true;
}

}  // namespace allocsim
