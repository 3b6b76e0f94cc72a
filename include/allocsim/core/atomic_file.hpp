// Writing a file so that it appears complete or not at all.
//
// The content goes to a temporary file beside the target (same directory, so
// rename is atomic on POSIX), which is renamed over the target on commit().
// If the object is destroyed without commit() (an exception, an early
// return) the temporary file is removed and the target is untouched.
#pragma once

#include <fstream>
#include <string>

namespace allocsim {

class AtomicFile {
 public:
  // Opens the temporary file; throws InputError naming `path` when the
  // directory does not exist or cannot be written.
  explicit AtomicFile(std::string path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  std::ostream& stream() { return out_; }
  const std::string& temporary_path() const { return temporary_; }

  // Flushes, closes and renames onto the target; throws InputError on failure.
  void commit();

 private:
  std::string path_;
  std::string temporary_;
  std::ofstream out_;
  bool committed_ = false;
};

// A temporary name beside `path`, unique to this process.
std::string temporary_name_for(const std::string& path);

}  // namespace allocsim
