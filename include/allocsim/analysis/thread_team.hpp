// A fixed team of threads for the parallel steps of one solve.
//
// run(tasks, body) calls body(task) once for each task in [0, tasks) and
// returns when every call has returned; the calling thread takes part.
// Tasks go out one at a time, in increasing order, to whichever thread asks
// next, so a thread the system does not schedule (a machine busy with other
// work) just does fewer of them, and the caller may do them all. Between
// steps the helpers spin for at most `spin_microseconds`, then sleep on a
// futex (a condition variable): they never hold a core while idle, whatever
// OMP_WAIT_POLICY says. With one thread, run() is a plain loop.
//
// What a task computes must not depend on which thread runs it; then the
// results are the same for any number of threads.
#pragma once

#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace allocsim {

class ThreadTeam {
 public:
  // threads >= 1 (1 = no helper threads).
  explicit ThreadTeam(int threads, double spin_microseconds = 50);
  ~ThreadTeam();
  ThreadTeam(const ThreadTeam&) = delete;
  ThreadTeam& operator=(const ThreadTeam&) = delete;

  int threads() const { return static_cast<int>(helpers_.size()) + 1; }
  // 0 < tasks < 2^24; body may not call run() of the same team.
  void run(int tasks, const std::function<void(int)>& body);

 private:
  void helper_loop();
  // Claims and runs tasks of the current step until none is left.
  void work_on_step();

  // The step in one word: generation (bits 63..48), task count (47..24)
  // and the next task to hand out (23..0).
  std::atomic<std::uint64_t> ticket_{0};
  const std::function<void(int)>* body_ = nullptr;
  std::atomic<int> finished_{0};
  std::atomic<int> sleepers_{0};
  std::atomic<bool> caller_waiting_{false};
  std::atomic<bool> stop_{false};
  std::mutex mutex_;
  std::condition_variable wake_, done_;
  long spin_nanoseconds_ = 0;
  std::vector<std::thread> helpers_;
};

}  // namespace allocsim
