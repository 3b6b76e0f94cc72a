// Exact transport against scipy's HiGHS and against the bare LEMON call.
//
// The bare call is what a user of LEMON would write for the same problem:
// a SmartDigraph with an arc per cell, costs (largest gain - gain), integer
// supplies (the same scaling to 1e12 units), NetworkSimplex::run(). Its time
// includes building the graph, as solve_exact's does.
#include <lemon/network_simplex.h>
#include <lemon/smart_graph.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <vector>

#include "allocsim/analysis/exact_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

// Supplies in integer units summing to `units` (floor, then the shortfall
// one unit each to the first entries; the bare call needs no more care).
std::vector<std::int64_t> integer_masses(const Vector& masses, std::int64_t units) {
  std::vector<std::int64_t> out(static_cast<std::size_t>(masses.size()));
  std::int64_t left = units;
  for (Eigen::Index k = 0; k < masses.size(); ++k) {
    out[static_cast<std::size_t>(k)] = static_cast<std::int64_t>(
        std::floor(masses[k] / masses.sum() * static_cast<double>(units)));
    left -= out[static_cast<std::size_t>(k)];
  }
  for (std::size_t k = 0; left > 0; k = (k + 1) % out.size(), --left) ++out[k];
  return out;
}

// Returns the total gain; -infinity when LEMON does not report optimal.
double bare_lemon(const TransportProblem& p, const std::vector<std::int64_t>& supply,
                  const std::vector<std::int64_t>& demand) {
  using Graph = lemon::SmartDigraph;
  const int n = static_cast<int>(p.agents()), m = static_cast<int>(p.partners());
  Graph graph;
  graph.reserveNode(n + m);
  graph.reserveArc(n * m);
  for (int k = 0; k < n + m; ++k) graph.addNode();
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < m; ++j) graph.addArc(graph.nodeFromId(i), graph.nodeFromId(n + j));
  const double largest = p.gains.maxCoeff();
  Graph::ArcMap<double> cost(graph);
  for (int a = 0; a < n * m; ++a) cost[graph.arcFromId(a)] = largest - p.gains(a / m, a % m);
  Graph::NodeMap<std::int64_t> node_supply(graph);
  for (int i = 0; i < n; ++i)
    node_supply[graph.nodeFromId(i)] = supply[static_cast<std::size_t>(i)];
  for (int j = 0; j < m; ++j)
    node_supply[graph.nodeFromId(n + j)] = -demand[static_cast<std::size_t>(j)];
  lemon::NetworkSimplex<Graph, std::int64_t, double> simplex(graph);
  simplex.costMap(cost).supplyMap(node_supply);
  if (simplex.run() != decltype(simplex)::OPTIMAL) return -INFINITY;
  double gain = 0;
  const double unit = p.total_mass() / 1e12;
  for (int a = 0; a < n * m; ++a)
    gain += static_cast<double>(simplex.flow(graph.arcFromId(a))) * unit * p.gains(a / m, a % m);
  return gain;
}

}  // namespace

void exact_rows(const Settings& settings, Report& report) {
  const std::vector<long> sizes =
      settings.quick ? std::vector<long>{50, 100} : std::vector<long>{100, 300, 1000};
  for (long n : sizes) {
    const TransportProblem p = make_instance(n, n, GainKind::random, 1000 + n);
    const auto supply = integer_masses(p.budgets, 1000000000000LL);
    const auto demand = integer_masses(p.capacities, 1000000000000LL);
    ExactResult ours;
    double bare_gain = 0;
    // Alternating, so that both meet the same background load; best of each.
    double ours_time = 1e300, bare_time = 1e300;
    for (int k = 0; k < settings.repeats + 2; ++k) {
      ours_time = std::min(ours_time, best_time(1, [&] { ours = solve_exact(p); }));
      bare_time =
          std::min(bare_time, best_time(1, [&] { bare_gain = bare_lemon(p, supply, demand); }));
    }

    write_instance(p, settings.workdir);
    const PythonAnswer highs =
        run_python({"highs", settings.workdir, std::to_string(n), std::to_string(n)});
    const double highs_time = highs.number("seconds");
    const double highs_gain = highs.number("total_gain");
    const std::string size = "n=m=" + std::to_string(n);

    Row vs_highs{"exact",
                 size + " vs scipy HiGHS",
                 format_seconds(ours_time),
                 highs.ok() ? "HiGHS " + format_seconds(highs_time) : "HiGHS failed",
                 highs_time / ours_time,
                 "",
                 Verdict::info,
                 {}};
    if (n == sizes.back()) {
      vs_highs.target = ">= 30x faster";
      vs_highs.verdict = highs_time / ours_time >= 30 ? Verdict::met : Verdict::missed;
    }
    vs_highs.values.add("n", static_cast<long long>(n))
        .add("seconds", ours_time)
        .add("highs_seconds", highs_time)
        .add("total_gain", ours.total_gain)
        .add("highs_total_gain", highs_gain)
        .add("relative_gain_difference",
             std::abs(ours.total_gain - highs_gain) / std::max(1e-300, std::abs(highs_gain)))
        .add("support_size", static_cast<long long>(ours.support_size))
        .add("forest", ours.support_is_forest);
    report.add(std::move(vs_highs));

    const double over = ours_time / bare_time;
    Row vs_bare{"exact",
                size + " vs bare LEMON call",
                format_seconds(ours_time),
                "LEMON " + format_seconds(bare_time),
                over,
                "",
                Verdict::info,
                {}};
    if (n == sizes.back()) {
      vs_bare.target = "<= 1.3x the bare call";
      vs_bare.verdict = over <= 1.3 ? Verdict::met : Verdict::missed;
    }
    vs_bare.values.add("n", static_cast<long long>(n))
        .add("seconds", ours_time)
        .add("bare_seconds", bare_time)
        .add("bare_total_gain", bare_gain);
    report.add(std::move(vs_bare));
  }
}

}  // namespace allocsim::bench
