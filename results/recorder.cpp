#include "allocsim/results/recorder.hpp"

#include <algorithm>

#include "allocsim/results/hdf5_io.hpp"

namespace allocsim {
namespace {

constexpr int kDeflateLevel = 4;

H5::DataSet extendable(H5::Group& group, const std::string& name, const H5::PredType& type,
                       int rank, const hsize_t* row_shape_and_chunk) {
  hsize_t dims[3] = {0, 0, 0}, maxdims[3] = {H5S_UNLIMITED, 0, 0}, chunk[3] = {1, 1, 1};
  for (int d = 1; d < rank; ++d) {
    dims[d] = maxdims[d] = row_shape_and_chunk[d];
    chunk[d] = std::max<hsize_t>(1, row_shape_and_chunk[d]);
  }
  chunk[0] = row_shape_and_chunk[0];
  H5::DSetCreatPropList plist;
  plist.setChunk(rank, chunk);
  plist.setShuffle();
  plist.setDeflate(kDeflateLevel);
  return group.createDataSet(name, type, H5::DataSpace(rank, dims, maxdims), plist);
}

// Appends one slab (of shape row_shape) at index `at` of the first axis.
void append(H5::DataSet& ds, int rank, hsize_t at, const hsize_t* row_shape, const void* data,
            const H5::PredType& memory_type) {
  hsize_t size[3] = {at + 1, 0, 0}, offset[3] = {at, 0, 0}, count[3] = {1, 0, 0};
  for (int d = 1; d < rank; ++d) size[d] = count[d] = row_shape[d];
  ds.extend(size);
  H5::DataSpace file_space = ds.getSpace();
  file_space.selectHyperslab(H5S_SELECT_SET, count, offset);
  H5::DataSpace memory_space(rank, count);
  ds.write(data, memory_type, memory_space, file_space);
}

}  // namespace

void write_scenario(H5::Group& run_group, const TransportProblem& problem) {
  H5::Group scenario = run_group.createGroup("scenario");
  write_matrix(scenario, "gains", problem.gains);
  write_vector(scenario, "budgets", problem.budgets);
  write_vector(scenario, "capacities", problem.capacities);
  if (problem.access) write_access(scenario, "access", *problem.access);
}

AllocationRecorder::AllocationRecorder(H5::Group& run_group, long agents, long partners)
    : run_group_(run_group),
      allocation_(run_group.createGroup("allocation")),
      agents_(agents),
      partners_(partners) {
  const hsize_t snapshot_chunk[3] = {1, static_cast<hsize_t>(agents), static_cast<hsize_t>(partners)};
  snapshots_ = extendable(allocation_, "snapshots", H5::PredType::IEEE_F64LE, 3, snapshot_chunk);
  const hsize_t round_chunk[1] = {256};
  round_end_ = extendable(allocation_, "round_end", H5::PredType::STD_I64LE, 1, round_chunk);
}

void AllocationRecorder::add_snapshot(const Matrix& counts, long round_end, const Vector* prices) {
  const hsize_t snapshot_shape[3] = {1, static_cast<hsize_t>(agents_),
                                     static_cast<hsize_t>(partners_)};
  append(snapshots_, 3, count_, snapshot_shape, counts.data(), H5::PredType::NATIVE_DOUBLE);
  const long long end = round_end;
  const hsize_t scalar_shape[1] = {1};
  append(round_end_, 1, count_, scalar_shape, &end, H5::PredType::NATIVE_LLONG);
  if (prices) {
    const hsize_t price_shape[2] = {1, static_cast<hsize_t>(partners_)};
    if (!has_prices_) {
      const hsize_t price_chunk[2] = {std::max<hsize_t>(1, std::min<hsize_t>(64, 131072 / std::max<long>(1, partners_))),
                                      static_cast<hsize_t>(partners_)};
      prices_ = extendable(run_group_, "prices", H5::PredType::IEEE_F64LE, 2, price_chunk);
      has_prices_ = true;
    }
    append(prices_, 2, count_, price_shape, prices->data(), H5::PredType::NATIVE_DOUBLE);
  }
  ++count_;
}

void AllocationRecorder::finish(const RunResult& result) {
  write_matrix(allocation_, "total", result.total);
}

}  // namespace allocsim
