// The machine's bounds, measured in the same run: a STREAM-like read kernel
// (sum of a buffer) on one and two threads, and the cost of one vectorised
// exp (Eigen's, as the solvers use it).
#include <omp.h>

#include <Eigen/Dense>
#include <vector>

#include "bench.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

double volatile sink_value = 0;  // keeps the sums alive

// Eigen's sum keeps several vector accumulators, so it is not held back by
// the latency of one chain of additions.
double sum_range(const double* a, long count) {
  return Eigen::Map<const Eigen::ArrayXd>(a, count).sum();
}

// Read bandwidth (bytes/s) over `count` doubles with `threads` threads,
// `passes` sweeps per timing, best of `repeats`.
double read_bandwidth(long count, int threads, int passes, int repeats) {
  std::vector<double> buffer(static_cast<std::size_t>(count));
#pragma omp parallel for num_threads(threads) schedule(static)
  for (long k = 0; k < count; ++k) buffer[static_cast<std::size_t>(k)] = 1e-3 * (k % 97);
  const double seconds = best_time(repeats, [&] {
    double total = 0;
    for (int p = 0; p < passes; ++p) {
#pragma omp parallel num_threads(threads) reduction(+ : total)
      {
        const int t = omp_get_thread_num(), nt = omp_get_num_threads();
        const long begin = count * t / nt, end = count * (t + 1) / nt;
        total += sum_range(buffer.data() + begin, end - begin);
      }
    }
    sink_value = total;
  });
  return static_cast<double>(count) * 8.0 * passes / seconds;
}

}  // namespace

Bandwidth measure_bandwidth(const Settings& settings, Report& report) {
  const long side = settings.quick ? 300 : 1000;
  const long kernel = side * side;
  const long dram = settings.quick ? (64L << 20) / 8 : (384L << 20) / 8;  // far above the caches
  Bandwidth b;
  b.read_one = read_bandwidth(kernel, 1, 40, settings.repeats + 2);
  b.read_two = read_bandwidth(kernel, 2, 40, settings.repeats + 2);
  b.dram_one = read_bandwidth(dram, 1, 2, settings.repeats);
  b.dram_two = read_bandwidth(dram, 2, 2, settings.repeats);

  Eigen::ArrayXd x = Eigen::ArrayXd::LinSpaced(kernel, -30.0, 0.0), y(kernel);
  const double exp_time = best_time(settings.repeats + 2, [&] {
    y = x.exp();
    sink_value = y[kernel / 2];
  });
  b.exp_seconds = exp_time / static_cast<double>(kernel);

  const auto gbs = [](double v) { return format_number(v / 1e9) + " GB/s"; };
  const std::string size = format_number(kernel * 8 / 1e6) + " MB";
  Row r1{"machine",
         "read bandwidth, " + size + " buffer (a " + std::to_string(side) + "^2 kernel)",
         gbs(b.read_one) + " (1 thread)",
         gbs(b.read_two) + " (2 threads)",
         b.read_two / b.read_one,
         "",
         Verdict::info,
         {}};
  r1.values.add("bytes", static_cast<long long>(kernel * 8))
      .add("one_thread_bytes_per_second", b.read_one)
      .add("two_threads_bytes_per_second", b.read_two);
  report.add(std::move(r1));
  Row r2{"machine",
         "read bandwidth, " + std::to_string(dram * 8 >> 20) + " MiB buffer (main memory)",
         gbs(b.dram_one) + " (1 thread)",
         gbs(b.dram_two) + " (2 threads)",
         b.dram_two / b.dram_one,
         "",
         Verdict::info,
         {}};
  r2.values.add("bytes", static_cast<long long>(dram * 8))
      .add("one_thread_bytes_per_second", b.dram_one)
      .add("two_threads_bytes_per_second", b.dram_two);
  report.add(std::move(r2));
  Row r3{"machine",
         "vectorised exp (Eigen), one thread",
         format_seconds(b.exp_seconds) + " per exp",
         "",
         0,
         "",
         Verdict::info,
         {}};
  r3.values.add("seconds_per_exp", b.exp_seconds);
  report.add(std::move(r3));
  return b;
}

}  // namespace allocsim::bench
