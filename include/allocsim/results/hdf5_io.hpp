// Small helpers for writing results with the HDF5 C++ API.
//
// Text is written as variable-length UTF-8 strings (h5py then reads str, not
// bytes); numbers as float64 or int64; matrices row-major, as HDF5 expects.
#pragma once

#include <H5Cpp.h>

#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

void set_text_attribute(H5::H5Object& target, const std::string& name, const std::string& value);
void set_number_attribute(H5::H5Object& target, const std::string& name, double value);
void set_integer_attribute(H5::H5Object& target, const std::string& name, long long value);

// Compressed (deflate + shuffle), chunked datasets.
void write_matrix(H5::Group& group, const std::string& name, const Matrix& values);
void write_vector(H5::Group& group, const std::string& name, const Vector& values);
void write_access(H5::Group& group, const std::string& name, const AccessMask& values);
void write_integers(H5::Group& group, const std::string& name, const std::vector<long long>& values);
void write_texts(H5::Group& group, const std::string& name, const std::vector<std::string>& values);

// The UTF-8 variable-length string type.
H5::StrType text_type();

}  // namespace allocsim
