// Small helpers for writing results with the HDF5 C++ API.
//
// Text is written as variable-length UTF-8 strings (h5py then reads str, not
// bytes); numbers as float64 or int64; matrices row-major, as HDF5 expects.
#pragma once

#include <H5Cpp.h>

#include <cerrno>
#include <string>
#include <vector>

#include "allocsim/core/error.hpp"
#include "allocsim/core/matrix.hpp"
#include "allocsim/core/output_file.hpp"

namespace allocsim {

void set_text_attribute(H5::H5Object& target, const std::string& name, const std::string& value);
void set_number_attribute(H5::H5Object& target, const std::string& name, double value);
void set_integer_attribute(H5::H5Object& target, const std::string& name, long long value);

// Compressed (deflate + shuffle), chunked datasets.
void write_matrix(H5::Group& group, const std::string& name, const Matrix& values);
void write_vector(H5::Group& group, const std::string& name, const Vector& values);
void write_access(H5::Group& group, const std::string& name, const AccessMask& values);
void write_integers(H5::Group& group, const std::string& name,
                    const std::vector<long long>& values);
void write_texts(H5::Group& group, const std::string& name, const std::vector<std::string>& values);

// A 1-D dataset of variable-length texts.
std::vector<std::string> read_text_dataset(const H5::DataSet& dataset);

// Runs `read` and turns an HDF5 exception into an InputError naming `path`
// (a damaged or truncated file).
template <class Read>
auto read_guarded(const std::string& path, Read&& read) -> decltype(read()) {
  try {
    return read();
  } catch (const H5::Exception& e) {
    throw InputError(path, "cannot be read as a results file (" + e.getDetailMsg() + ")");
  }
}

// Runs `write` and turns an HDF5 exception into a WriteError naming `path`
// and the cause (e.g. "No space left on device"); the command line reports
// it with exit code 1.
template <class Write>
auto write_guarded(const std::string& path, Write&& write) -> decltype(write()) {
  try {
    return write();
  } catch (const H5::Exception& e) {
    const int error = errno;
    throw WriteError(path, write_failure_cause(path, "HDF5: " + e.getDetailMsg(), error));
  }
}

// Leaves an HDF5 object (a dataset, a file) open for good instead of closing
// it: after a failed write, closing flushes into the failed file again, and
// HDF5 1.10 can then crash. The C++ handle's own close only drops a
// reference. The process keeps the object until it ends; HDF5's end-of-
// process cleanup is off (prepare_hdf5), so it is never flushed.
void abandon(const H5::IdComponent& object);

// Flushes a dataset's cached chunks, then closes it: a write that fails
// (a full disk) is an exception here, never in a destructor. On failure the
// dataset is abandoned and the exception goes on.
void flush_and_close(H5::DataSet& dataset);

// Turns off HDF5's diagnostics on stderr and its end-of-process cleanup (which
// would flush abandoned files). Idempotent; call before any other HDF5 call
// where possible (the command line does so first thing).
void prepare_hdf5();

// The last part of a layout path: "allocation/total" -> "total".
std::string leaf_name(const std::string& path);

// The UTF-8 variable-length string type.
H5::StrType text_type();

}  // namespace allocsim
