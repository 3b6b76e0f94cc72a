#include "mpi_sweep.hpp"

#include <cstdlib>
#include <mutex>

#ifdef ALLOCSIM_WITH_MPI
#include <mpi.h>
#endif

namespace allocsim::cli {
namespace {

// mpirun (OpenMPI) or a PMI launcher sets these; a plain start sets none.
bool launched_by_mpi() {
  return std::getenv("OMPI_COMM_WORLD_SIZE") || std::getenv("PMI_SIZE") || std::getenv("PMIX_RANK");
}

#ifdef ALLOCSIM_WITH_MPI
std::mutex mpi_mutex;  // MPI_THREAD_SERIALIZED: one thread in MPI at a time

class SharedCounter : public RunDistributor {
 public:
  explicit SharedCounter(long count) : count_(count) {
    MPI_Win_allocate(sizeof(long), sizeof(long), MPI_INFO_NULL, MPI_COMM_WORLD, &base_, &window_);
    *base_ = 0;
    MPI_Barrier(MPI_COMM_WORLD);
  }
  ~SharedCounter() override {
    std::lock_guard<std::mutex> lock(mpi_mutex);
    MPI_Win_free(&window_);
  }
  long next() override {
    std::lock_guard<std::mutex> lock(mpi_mutex);
    const long one = 1;
    long taken = 0;
    MPI_Win_lock(MPI_LOCK_SHARED, 0, 0, window_);
    MPI_Fetch_and_op(&one, &taken, MPI_LONG, 0, 0, MPI_SUM, window_);
    MPI_Win_unlock(0, window_);
    return taken < count_ ? taken : -1;
  }

 private:
  long count_;
  long* base_ = nullptr;
  MPI_Win window_;
};

std::vector<long> broadcast_from_first(std::vector<long> list) {
  std::lock_guard<std::mutex> lock(mpi_mutex);
  long size = static_cast<long>(list.size());
  MPI_Bcast(&size, 1, MPI_LONG, 0, MPI_COMM_WORLD);
  list.resize(static_cast<std::size_t>(size));
  MPI_Bcast(list.data(), static_cast<int>(size), MPI_LONG, 0, MPI_COMM_WORLD);
  return list;
}
#endif

}  // namespace

MpiSession::MpiSession() {
#ifdef ALLOCSIM_WITH_MPI
  if (!launched_by_mpi()) return;
  int provided = 0;
  MPI_Init_thread(nullptr, nullptr, MPI_THREAD_SERIALIZED, &provided);
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
  initialised_ = true;
#else
  (void)launched_by_mpi;
#endif
}

MpiSession::~MpiSession() {
#ifdef ALLOCSIM_WITH_MPI
  if (initialised_) MPI_Finalize();
#endif
}

void MpiSession::configure(SweepRequest& request) const {
  if (size_ == 1) return;
#ifdef ALLOCSIM_WITH_MPI
  request.merge_here = rank_ == 0;
  request.make_distributor = [](long count) { return std::make_unique<SharedCounter>(count); };
  request.share_to_do = broadcast_from_first;
  request.barrier = [] {
    std::lock_guard<std::mutex> lock(mpi_mutex);
    MPI_Barrier(MPI_COMM_WORLD);
  };
#else
  (void)request;
#endif
}

}  // namespace allocsim::cli
