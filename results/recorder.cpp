// AllocationRecorder: snapshots streamed into extendable, chunked datasets.
#include <algorithm>

#include "allocsim/results/layout.hpp"
#include "hdf5_io.hpp"
#include "run_group.hpp"

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

AllocationRecorder RunWriter::record_allocation(long agents, long partners) {
  return write_guarded(group_->path, [&]() -> AllocationRecorder {
    auto state = std::make_unique<AllocationRecorder::State>();
    state->run_group = group_->group;
    state->path = group_->path;
    state->allocation = group_->group.createGroup(layout::kAllocation);
    state->agents = agents;
    state->partners = partners;
    const hsize_t snapshot_chunk[3] = {1, static_cast<hsize_t>(agents),
                                       static_cast<hsize_t>(partners)};
    state->snapshots = extendable(state->allocation, leaf_name(layout::kSnapshots),
                                  H5::PredType::IEEE_F64LE, 3, snapshot_chunk);
    const hsize_t round_chunk[1] = {256};
    state->round_end = extendable(state->allocation, leaf_name(layout::kRoundEnd),
                                  H5::PredType::STD_I64LE, 1, round_chunk);
    return AllocationRecorder(std::move(state));
  });
}

AllocationRecorder::State::~State() {
  for (const H5::DataSet* ds : {&snapshots, &round_end, &prices}) abandon(*ds);
}

AllocationRecorder::AllocationRecorder(std::unique_ptr<State> state) : state_(std::move(state)) {}
AllocationRecorder::~AllocationRecorder() = default;
AllocationRecorder::AllocationRecorder(AllocationRecorder&&) noexcept = default;

void AllocationRecorder::add_snapshot(const Matrix& counts, long round_end, const Vector* prices) {
  return write_guarded(state_->path, [&]() -> void {
    State& s = *state_;
    const hsize_t snapshot_shape[3] = {1, static_cast<hsize_t>(s.agents),
                                       static_cast<hsize_t>(s.partners)};
    append(s.snapshots, 3, s.count, snapshot_shape, counts.data(), H5::PredType::NATIVE_DOUBLE);
    const long long end = round_end;
    const hsize_t scalar_shape[1] = {1};
    append(s.round_end, 1, s.count, scalar_shape, &end, H5::PredType::NATIVE_LLONG);
    if (prices) {
      const hsize_t price_shape[2] = {1, static_cast<hsize_t>(s.partners)};
      if (!s.has_prices) {
        const hsize_t price_chunk[2] = {
            std::max<hsize_t>(1, std::min<hsize_t>(64, 131072 / std::max<long>(1, s.partners))),
            static_cast<hsize_t>(s.partners)};
        s.prices =
            extendable(s.run_group, layout::kPrices, H5::PredType::IEEE_F64LE, 2, price_chunk);
        s.has_prices = true;
      }
      append(s.prices, 2, s.count, price_shape, prices->data(), H5::PredType::NATIVE_DOUBLE);
    }
    ++s.count;
  });
}

void AllocationRecorder::finish(const RunResult& result) {
  return write_guarded(state_->path, [&]() -> void {
    write_matrix(state_->allocation, leaf_name(layout::kTotal), result.total);
    flush_and_close(state_->snapshots);
    flush_and_close(state_->round_end);
    if (state_->has_prices) flush_and_close(state_->prices);
  });
}

}  // namespace allocsim
