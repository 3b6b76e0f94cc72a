#include "allocsim/core/atomic_file.hpp"

#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>

#include "allocsim/core/error.hpp"

namespace allocsim {

std::string temporary_name_for(const std::string& path) {
  return path + ".tmp-" + std::to_string(::getpid());
}

AtomicFile::AtomicFile(std::string path)
    : path_(std::move(path)), temporary_(temporary_name_for(path_)) {
  out_.open(temporary_, std::ios::out | std::ios::trunc | std::ios::binary);
  if (!out_) {
    throw InputError(path_, std::string("cannot be written (") + std::strerror(errno) +
                                "); check that the folder exists and is writable");
  }
}

AtomicFile::~AtomicFile() {
  if (!committed_) {
    out_.close();
    std::remove(temporary_.c_str());
  }
}

void AtomicFile::commit() {
  out_.flush();
  const bool ok = static_cast<bool>(out_);
  out_.close();
  if (!ok || std::rename(temporary_.c_str(), path_.c_str()) != 0) {
    std::remove(temporary_.c_str());
    throw InputError(path_, std::string("could not be written completely (") +
                                std::strerror(errno) + ")");
  }
  committed_ = true;
}

}  // namespace allocsim
