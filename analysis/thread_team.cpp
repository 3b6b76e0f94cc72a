#include "allocsim/analysis/thread_team.hpp"

#include <cassert>
#include <chrono>

#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>
#define ALLOCSIM_PAUSE() _mm_pause()
#else
#define ALLOCSIM_PAUSE() ((void)0)
#endif

namespace allocsim {
namespace {

constexpr std::uint64_t kIndexBits = 24, kCountBits = 24;
constexpr std::uint64_t kIndexMask = (std::uint64_t{1} << kIndexBits) - 1;
constexpr std::uint64_t kCountMask = (std::uint64_t{1} << kCountBits) - 1;

std::uint64_t generation_of(std::uint64_t ticket) { return ticket >> (kIndexBits + kCountBits); }
int count_of(std::uint64_t ticket) { return static_cast<int>((ticket >> kIndexBits) & kCountMask); }
int index_of(std::uint64_t ticket) { return static_cast<int>(ticket & kIndexMask); }

// Spins while `waiting()` holds, for at most `nanoseconds`; true when it stopped holding.
template <typename Condition>
bool spin_while(Condition waiting, long nanoseconds) {
  const auto until = std::chrono::steady_clock::now() + std::chrono::nanoseconds(nanoseconds);
  for (int k = 1;; ++k) {
    if (!waiting()) return true;
    ALLOCSIM_PAUSE();
    if ((k & 63) == 0 && std::chrono::steady_clock::now() >= until) return !waiting();
  }
}

}  // namespace

ThreadTeam::ThreadTeam(int threads, double spin_microseconds)
    : spin_nanoseconds_(static_cast<long>(spin_microseconds * 1e3)) {
  for (int t = 1; t < threads; ++t) helpers_.emplace_back([this] { helper_loop(); });
}

ThreadTeam::~ThreadTeam() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    stop_ = true;
  }
  wake_.notify_all();
  for (auto& h : helpers_) h.join();
}

void ThreadTeam::run(int tasks, const std::function<void(int)>& body) {
  assert(tasks > 0 && static_cast<std::uint64_t>(tasks) < kCountMask);
  if (helpers_.empty()) {
    for (int t = 0; t < tasks; ++t) body(t);
    return;
  }
  body_ = &body;
  finished_.store(0, std::memory_order_relaxed);
  const std::uint64_t generation = generation_of(ticket_.load()) + 1;
  ticket_.store((generation << (kIndexBits + kCountBits)) |
                (static_cast<std::uint64_t>(tasks) << kIndexBits));  // seq_cst: publishes body_
  if (sleepers_.load() > 0) {
    { std::lock_guard<std::mutex> lock(mutex_); }
    wake_.notify_all();
  }
  work_on_step();
  const auto unfinished = [&] { return finished_.load(std::memory_order_acquire) < tasks; };
  if (spin_while(unfinished, spin_nanoseconds_)) return;
  std::unique_lock<std::mutex> lock(mutex_);
  caller_waiting_ = true;
  done_.wait(lock, [&] { return !unfinished(); });
  caller_waiting_ = false;
}

void ThreadTeam::work_on_step() {
  for (;;) {
    std::uint64_t t = ticket_.load();
    if (index_of(t) >= count_of(t)) return;
    if (!ticket_.compare_exchange_weak(t, t + 1)) continue;
    // The step cannot end before this task is done, so body_ is this step's.
    (*body_)(index_of(t));
    if (finished_.fetch_add(1, std::memory_order_acq_rel) + 1 == count_of(t) &&
        caller_waiting_.load()) {
      { std::lock_guard<std::mutex> lock(mutex_); }
      done_.notify_all();
    }
  }
}

void ThreadTeam::helper_loop() {
  std::uint64_t seen = 0;  // generation last worked on
  const auto idle = [&] { return generation_of(ticket_.load()) == seen && !stop_.load(); };
  for (;;) {
    if (!spin_while(idle, spin_nanoseconds_)) {
      std::unique_lock<std::mutex> lock(mutex_);
      sleepers_.fetch_add(1);
      wake_.wait(lock, [&] { return !idle(); });
      sleepers_.fetch_sub(1);
    }
    if (stop_.load()) return;
    seen = generation_of(ticket_.load());
    work_on_step();
  }
}

}  // namespace allocsim
