#include "instances.hpp"

#include <fstream>
#include <stdexcept>

#include "allocsim/core/random.hpp"

namespace allocsim::bench {

std::string to_string(GainKind kind) { return kind == GainKind::random ? "random" : "geometric"; }

TransportProblem make_instance(long n, long m, GainKind kind, std::uint64_t seed) {
  TransportProblem p;
  RandomStream gains(seed, 0, StreamId::gains);
  p.gains.resize(n, m);
  if (kind == GainKind::random) {
    for (long i = 0; i < n; ++i)
      for (long j = 0; j < m; ++j) p.gains(i, j) = gains.uniform();
  } else {
    Matrix agent(n, 2), partner(m, 2);
    for (long i = 0; i < n; ++i) agent(i, 0) = gains.uniform(), agent(i, 1) = gains.uniform();
    for (long j = 0; j < m; ++j) partner(j, 0) = gains.uniform(), partner(j, 1) = gains.uniform();
    for (long i = 0; i < n; ++i)
      for (long j = 0; j < m; ++j) p.gains(i, j) = -(agent.row(i) - partner.row(j)).squaredNorm();
  }
  RandomStream budgets(seed, 0, StreamId::budgets), capacities(seed, 0, StreamId::capacities);
  p.budgets.resize(n);
  p.capacities.resize(m);
  for (long i = 0; i < n; ++i) p.budgets[i] = 0.5 + budgets.uniform();
  for (long j = 0; j < m; ++j) p.capacities[j] = 0.5 + capacities.uniform();
  p.budgets /= p.budgets.sum();
  p.capacities /= p.capacities.sum();
  return p;
}

namespace {
void write_raw(const std::string& path, const double* data, long count) {
  std::ofstream out(path, std::ios::binary);
  out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(count * 8));
  if (!out) throw std::runtime_error("cannot write " + path);
}
}  // namespace

void write_instance(const TransportProblem& p, const std::string& folder) {
  write_raw(folder + "/gains.bin", p.gains.data(), p.gains.size());
  write_raw(folder + "/budgets.bin", p.budgets.data(), p.budgets.size());
  write_raw(folder + "/capacities.bin", p.capacities.data(), p.capacities.size());
}

}  // namespace allocsim::bench
