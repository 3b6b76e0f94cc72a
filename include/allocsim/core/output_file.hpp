// The rules every output of allocsim follows, so that nothing is clobbered:
//
//   * a symlink is followed: its target is written, the link stays;
//   * a directory is refused; a character device or a FIFO is written
//     through by CSV writers and refused by writers that need a seekable
//     file (HDF5 results); other kinds (sockets, block devices) are refused;
//   * an output that is the same file as an input or as another output of
//     the same command is refused;
//   * a temporary "<output>.tmp-<pid>" whose process is gone is an orphan of
//     a killed writer and is removed by the next writer of that output;
//   * one process at a time writes an output (OutputLock, an advisory lock
//     on "<output>.lock"; a second one is told who holds it).
#pragma once

#include <string>
#include <utility>
#include <vector>

namespace allocsim {

enum class OutputKind { absent, regular, directory, device_or_fifo, other };

struct ResolvedOutput {
  std::string path;  // the file to write (a symlink's target, made absolute when followed)
  OutputKind kind = OutputKind::absent;
  std::string described;  // "a FIFO", "a character device", "a directory", ...
};

// Follows symlinks (also dangling ones: their target is where the file goes).
ResolvedOutput resolve_output(const std::string& path);

// Throws InputError(label) unless `path` is absent or a regular file (or a
// symlink to one): for outputs that must be seekable (HDF5).
ResolvedOutput require_regular_output(const std::string& path, const std::string& label);

// True when both names lead to the same file (also through symlinks and
// "..", and for files that do not exist yet).
bool same_file(const std::string& a, const std::string& b);

// Throws InputError(output_label) when `output` is the same file as one of
// `others` (label, path); empty paths are skipped. E.g.
//   "--csv: out.h5 is also output.file (the results file); choose another name".
void require_distinct(const std::string& output, const std::string& output_label,
                      const std::vector<std::pair<std::string, std::string>>& others);

// Remembers `path` (a regular file) as an input read by this process.
// Thread-safe.
void remember_input(const std::string& path);

// Throws InputError(label) when `output` is the same file as an input
// remembered by remember_input, e.g. "res.h5: is also an input of this
// command (res.h5); it would be overwritten: choose another name".
void require_not_an_input(const std::string& output, const std::string& label);

// Removes "<path>.tmp-<pid>" beside `path` whose process no longer runs;
// returns how many were removed.
int remove_orphan_temporaries(const std::string& path);
// Removes every "*.tmp-<pid>" in `folder` whose process no longer runs.
int remove_orphan_temporaries_in(const std::string& folder);

// The cause of a failed write of `path` by a library that does not report
// errno (HDF5): strerror(error) when `error` names a write failure (ENOSPC,
// EDQUOT, EIO, EROFS, EFBIG), "No space left on device" when the folder of
// `path` has less than 1 MB free, otherwise `detail`.
std::string write_failure_cause(const std::string& path, const std::string& detail, int error);

// A folder made for outputs: created with its missing parents; when the
// object is destroyed before keep() (a failed write), the folders it
// created are removed again if they are still empty, so a failure leaves
// nothing behind. Throws InputError(label) when the folder cannot be made
// or a file has its name.
class NewFolder {
 public:
  NewFolder(const std::string& folder, const std::string& label);
  ~NewFolder();
  NewFolder(const NewFolder&) = delete;
  NewFolder& operator=(const NewFolder&) = delete;
  void keep() { created_.clear(); }

 private:
  std::vector<std::string> created_;  // innermost first
};

// An advisory lock (flock) on "<path>.lock", held while the object lives;
// the lock file holds the holder's pid and start time and is removed on
// release. A process killed by SIGKILL releases its lock (the kernel drops
// it); its file is then taken over by the next holder.
class OutputLock {
 public:
  // Throws InputError(path, "is being written by another allocsim (pid N,
  // since ...); ...") when another process holds it.
  explicit OutputLock(const std::string& path);
  ~OutputLock();
  OutputLock(const OutputLock&) = delete;
  OutputLock& operator=(const OutputLock&) = delete;

 private:
  std::string lock_path_;
  int fd_ = -1;
};

}  // namespace allocsim
