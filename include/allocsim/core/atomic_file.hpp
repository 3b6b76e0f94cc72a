// Writing a file so that it appears complete or not at all.
//
// The target is resolved first (output_file.hpp): a symlink is followed (the
// link stays, its target is written), a directory or a socket is refused. A
// regular or new target gets a temporary file beside it (same directory, so
// rename is atomic on POSIX), renamed over the target on commit() with the
// permissions of the file it replaces. A character device or a FIFO is
// written through instead (nothing is renamed over it). If the object is
// destroyed without commit() (an exception, an early return) the temporary
// file is removed and the target is untouched; a kill leaves at most
// "<target>.tmp-<pid>", which the next writer of that target removes
// (remove_orphan_temporaries).
#pragma once

#include <memory>
#include <ostream>
#include <streambuf>
#include <string>

namespace allocsim {

class AtomicFile {
 public:
  // Opens the temporary file (or the device); throws InputError naming `path`
  // when the folder does not exist or cannot be written, or when the target
  // is a directory or another kind of file that cannot be written.
  explicit AtomicFile(std::string path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  std::ostream& stream() { return *out_; }
  const std::string& temporary_path() const { return temporary_; }

  // Flushes, syncs and renames onto the target; throws WriteError naming the
  // target and the cause (e.g. "No space left on device") on failure, after
  // removing the temporary file.
  void commit();

 private:
  class Buffer;
  std::string path_;       // as given, for messages
  std::string target_;     // the resolved file written
  std::string temporary_;  // "" when writing through a device or FIFO
  std::unique_ptr<Buffer> buffer_;
  std::unique_ptr<std::ostream> out_;
  bool committed_ = false;
};

// A temporary name beside `path`, unique to this process:
// "<path>.tmp-<pid>". The name is remembered, so that SIGINT or SIGTERM
// (remove_temporaries_and_exit) removes it whoever created the file.
std::string temporary_name_for(const std::string& path);

// Removes every temporary file named by temporary_name_for in this process,
// then ends the process with `code` (async-signal-safe).
[[noreturn]] void remove_temporaries_and_exit(int code);

// Installs SIGINT and SIGTERM handlers that do remove_temporaries_and_exit
// with 128 + the signal number (130, 143).
void exit_cleanly_on_signals();

}  // namespace allocsim
