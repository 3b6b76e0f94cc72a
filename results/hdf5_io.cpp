#include "hdf5_io.hpp"

#include <algorithm>
#include <mutex>

namespace allocsim {
namespace {

constexpr int kDeflateLevel = 4;

H5::DSetCreatPropList compressed(int rank, const hsize_t* chunk) {
  H5::DSetCreatPropList plist;
  plist.setChunk(rank, chunk);
  plist.setShuffle();
  plist.setDeflate(kDeflateLevel);
  return plist;
}

// About 1 MB per chunk of doubles, whole rows.
hsize_t rows_per_chunk(hsize_t rows, hsize_t cols) {
  return std::max<hsize_t>(1, std::min<hsize_t>(rows, 131072 / std::max<hsize_t>(1, cols)));
}

// Writes through `write`, then flushes and closes `ds`; abandons it when
// anything fails.
template <class Write>
void write_then_close(H5::DataSet& ds, Write&& write) {
  try {
    write();
  } catch (...) {
    abandon(ds);
    throw;
  }
  flush_and_close(ds);
}

}  // namespace

void abandon(const H5::IdComponent& object) {
  const hid_t id = object.getId();
  if (id >= 0 && H5Iis_valid(id) > 0) H5Iinc_ref(id);
}

void flush_and_close(H5::DataSet& dataset) {
  if (dataset.getId() < 0 || H5Iis_valid(dataset.getId()) <= 0) return;
  if (H5Dflush(dataset.getId()) < 0) {
    abandon(dataset);
    throw H5::DataSetIException("flush_and_close", "H5Dflush failed");
  }
  dataset.close();
}

void prepare_hdf5() {
  static std::once_flag once;
  std::call_once(once, [] { H5dont_atexit(); });
  H5::Exception::dontPrint();  // per thread in a thread-safe HDF5
}

std::vector<std::string> read_text_dataset(const H5::DataSet& dataset) {
  const H5::DataSpace space = dataset.getSpace();
  hsize_t rows = 0;
  if (space.getSimpleExtentNdims() == 1) space.getSimpleExtentDims(&rows);
  std::vector<char*> raw(rows, nullptr);
  if (rows == 0) return {};
  const H5::StrType type = dataset.getStrType();
  if (!type.isVariableStr()) return std::vector<std::string>(rows);
  dataset.read(raw.data(), type);
  std::vector<std::string> values;
  for (char* text : raw) values.emplace_back(text ? text : "");
  H5::DataSet::vlenReclaim(raw.data(), type, space);
  return values;
}

std::string leaf_name(const std::string& path) { return path.substr(path.rfind('/') + 1); }

H5::StrType text_type() {
  H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
  type.setCset(H5T_CSET_UTF8);
  return type;
}

void set_text_attribute(H5::H5Object& target, const std::string& name, const std::string& value) {
  if (target.attrExists(name)) target.removeAttr(name);
  const H5::StrType type = text_type();
  H5::Attribute attribute = target.createAttribute(name, type, H5::DataSpace(H5S_SCALAR));
  attribute.write(type, value);
}

void set_number_attribute(H5::H5Object& target, const std::string& name, double value) {
  if (target.attrExists(name)) target.removeAttr(name);
  H5::Attribute attribute =
      target.createAttribute(name, H5::PredType::NATIVE_DOUBLE, H5::DataSpace(H5S_SCALAR));
  attribute.write(H5::PredType::NATIVE_DOUBLE, &value);
}

void set_integer_attribute(H5::H5Object& target, const std::string& name, long long value) {
  if (target.attrExists(name)) target.removeAttr(name);
  H5::Attribute attribute =
      target.createAttribute(name, H5::PredType::STD_I64LE, H5::DataSpace(H5S_SCALAR));
  attribute.write(H5::PredType::NATIVE_LLONG, &value);
}

void write_matrix(H5::Group& group, const std::string& name, const Matrix& values) {
  const hsize_t dims[2] = {static_cast<hsize_t>(values.rows()),
                           static_cast<hsize_t>(values.cols())};
  const hsize_t chunk[2] = {rows_per_chunk(dims[0], dims[1]), std::max<hsize_t>(1, dims[1])};
  H5::DataSet ds = group.createDataSet(name, H5::PredType::IEEE_F64LE, H5::DataSpace(2, dims),
                                       compressed(2, chunk));
  write_then_close(ds, [&] { ds.write(values.data(), H5::PredType::NATIVE_DOUBLE); });
}

void write_vector(H5::Group& group, const std::string& name, const Vector& values) {
  const hsize_t dims[1] = {static_cast<hsize_t>(values.size())};
  const hsize_t chunk[1] = {std::max<hsize_t>(1, std::min<hsize_t>(dims[0], 131072))};
  H5::DataSet ds = group.createDataSet(name, H5::PredType::IEEE_F64LE, H5::DataSpace(1, dims),
                                       compressed(1, chunk));
  write_then_close(ds, [&] { ds.write(values.data(), H5::PredType::NATIVE_DOUBLE); });
}

void write_access(H5::Group& group, const std::string& name, const AccessMask& values) {
  const hsize_t dims[2] = {static_cast<hsize_t>(values.rows()),
                           static_cast<hsize_t>(values.cols())};
  const hsize_t chunk[2] = {
      std::max<hsize_t>(1, std::min<hsize_t>(dims[0], 1048576 / std::max<hsize_t>(1, dims[1]))),
      std::max<hsize_t>(1, dims[1])};
  H5::DataSet ds = group.createDataSet(name, H5::PredType::STD_U8LE, H5::DataSpace(2, dims),
                                       compressed(2, chunk));
  write_then_close(ds, [&] { ds.write(values.data(), H5::PredType::NATIVE_UINT8); });
}

void write_integers(H5::Group& group, const std::string& name,
                    const std::vector<long long>& values) {
  const hsize_t dims[1] = {values.size()};
  H5::DataSet ds = group.createDataSet(name, H5::PredType::STD_I64LE, H5::DataSpace(1, dims));
  write_then_close(ds, [&] {
    if (!values.empty()) ds.write(values.data(), H5::PredType::NATIVE_LLONG);
  });
}

void write_texts(H5::Group& group, const std::string& name,
                 const std::vector<std::string>& values) {
  const hsize_t dims[1] = {values.size()};
  const H5::StrType type = text_type();
  H5::DataSet ds = group.createDataSet(name, type, H5::DataSpace(1, dims));
  std::vector<const char*> pointers;
  for (const auto& v : values) pointers.push_back(v.c_str());
  write_then_close(ds, [&] {
    if (!values.empty()) ds.write(pointers.data(), type);
  });
}

}  // namespace allocsim
