#include "allocsim/analysis/exact_transport.hpp"

#include <lemon/network_simplex.h>
#include <lemon/preflow.h>
#include <lemon/smart_graph.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <limits>
#include <numeric>
#include <optional>
#include <sstream>
#include <vector>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

// Gains above this in absolute value are divided by the largest one before
// they become costs (so that gains of +-1e308 cannot overflow).
constexpr double kScaleAbove = 1e100;

using Clock = std::chrono::steady_clock;
using Graph = lemon::SmartDigraph;
using Units = std::int64_t;
using Simplex = lemon::NetworkSimplex<Graph, Units, double>;

// Integer units of the total mass in the feasibility (max-flow) check.
constexpr double kFeasibilityUnits = 1e15;
// A shortfall of the max flow below this share of the total mass is rounding,
// not infeasibility (the same order as the balance tolerance of validate()).
constexpr double kFeasibilityTolerance = 1e-9;
// Names listed in a message before "and N more".
constexpr std::size_t kMaxListed = 8;

double seconds_since(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

// Largest-remainder rounding: integers proportional to `masses` summing to `units`.
std::vector<Units> round_to_units(const Vector& masses, Units units) {
  const auto n = static_cast<std::size_t>(masses.size());
  const double scale = static_cast<double>(units) / masses.sum();
  std::vector<Units> rounded(n);
  std::vector<double> remainder(n);
  Units shortfall = units;
  for (std::size_t k = 0; k < n; ++k) {
    const double exact = masses[static_cast<Eigen::Index>(k)] * scale;
    rounded[k] = static_cast<Units>(std::floor(exact));
    remainder[k] = exact - static_cast<double>(rounded[k]);
    shortfall -= rounded[k];
  }
  std::vector<std::size_t> order(n);  // largest remainder first
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return remainder[a] > remainder[b]; });
  // shortfall is in [0, n) up to a unit or two of floating-point error.
  for (std::size_t k = 0; shortfall > 0; k = (k + 1) % n, --shortfall) ++rounded[order[k]];
  for (std::size_t k = n - 1; shortfall < 0; k = (k + n - 1) % n) {
    if (rounded[order[k]] > 0) --rounded[order[k]], ++shortfall;
  }
  return rounded;
}

// The allowed cells in row-major order, compressed by rows.
struct AllowedCells {
  std::vector<int> row_start;  // agents + 1 offsets into `partner`
  std::vector<int> partner;    // partner of each allowed cell
};

AllowedCells allowed_cells(const TransportProblem& p) {
  AllowedCells cells;
  const auto n = p.agents();
  const auto m = p.partners();
  const auto count = p.access ? static_cast<std::size_t>((p.access->array() != 0).count())
                              : static_cast<std::size_t>(n * m);
  // LEMON numbers arcs with int; the max-flow graph adds n + m + 2 of its own.
  if (count + static_cast<std::size_t>(n + m + 2) >
      static_cast<std::size_t>(std::numeric_limits<int>::max())) {
    throw InputError(
        "gains",
        std::to_string(count) + " allowed pairs are more than the network simplex can take (2^31)");
  }
  cells.row_start.reserve(static_cast<std::size_t>(n) + 1);
  cells.partner.reserve(count);
  cells.row_start.push_back(0);
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < m; ++j) {
      if (p.allowed(i, j)) cells.partner.push_back(static_cast<int>(j));
    }
    cells.row_start.push_back(static_cast<int>(cells.partner.size()));
  }
  return cells;
}

// ---------------------------------------------------------------------------
// Feasibility: max flow source -> agents -> partners -> sink.

struct FlowCheck {
  Units max_flow = 0;
  std::vector<Units> agent_flow;           // flow out of each agent
  std::vector<Units> partner_flow;         // flow into each partner
  std::vector<bool> agent_on_source_side;  // of a minimum cut
};

FlowCheck max_flow_check(const AllowedCells& cells, const std::vector<Units>& supply,
                         const std::vector<Units>& demand, bool need_flows) {
  const int n = static_cast<int>(supply.size());
  const int m = static_cast<int>(demand.size());
  const Units total = std::accumulate(supply.begin(), supply.end(), Units{0});
  Graph g;
  g.reserveNode(n + m + 2);
  g.reserveArc(n + m + static_cast<int>(cells.partner.size()));
  for (int k = 0; k < n + m + 2; ++k) g.addNode();
  const Graph::Node source = g.nodeFromId(n + m);
  const Graph::Node sink = g.nodeFromId(n + m + 1);
  // Arc ids: agents' source arcs 0..n-1, partners' sink arcs n..n+m-1, then the cells.
  for (int i = 0; i < n; ++i) g.addArc(source, g.nodeFromId(i));
  for (int j = 0; j < m; ++j) g.addArc(g.nodeFromId(n + j), sink);
  for (int i = 0; i < n; ++i) {
    for (int k = cells.row_start[i]; k < cells.row_start[i + 1]; ++k) {
      g.addArc(g.nodeFromId(i), g.nodeFromId(n + cells.partner[k]));
    }
  }
  Graph::ArcMap<Units> capacity(g, total + 1);  // cells: more than any cut
  for (int i = 0; i < n; ++i) capacity[g.arcFromId(i)] = supply[i];
  for (int j = 0; j < m; ++j) capacity[g.arcFromId(n + j)] = demand[j];

  lemon::Preflow<Graph, Graph::ArcMap<Units>> preflow(g, capacity, source, sink);
  if (need_flows)
    preflow.run();
  else
    preflow.runMinCut();

  FlowCheck check;
  check.max_flow = preflow.flowValue();
  check.agent_on_source_side.resize(n);
  for (int i = 0; i < n; ++i) check.agent_on_source_side[i] = preflow.minCut(g.nodeFromId(i));
  if (need_flows) {
    check.agent_flow.resize(n);
    check.partner_flow.resize(m);
    for (int i = 0; i < n; ++i) check.agent_flow[i] = preflow.flow(g.arcFromId(i));
    for (int j = 0; j < m; ++j) check.partner_flow[j] = preflow.flow(g.arcFromId(n + j));
  }
  return check;
}

// ---------------------------------------------------------------------------
// Messages.

std::string format_mass(double value) {
  std::ostringstream out;
  out.precision(6);
  out << value;
  return out.str();
}

// "agents 3, 7" or "agent 3"; 1-based; at most kMaxListed names, then "and N more".
std::string name_group(const char* singular, const std::vector<Eigen::Index>& members) {
  std::string text = singular;
  if (members.size() != 1) text += "s";
  for (std::size_t k = 0; k < members.size() && k < kMaxListed; ++k) {
    text += (k == 0 ? " " : ", ") + std::to_string(members[k] + 1);
  }
  if (members.size() > kMaxListed) {
    text += " and " + std::to_string(members.size() - kMaxListed) + " more";
  }
  return text;
}

// "budget 0.3" for one member, "budgets 0.6 in all" for several.
std::string mass_phrase(const char* singular, const char* plural, const Vector& values,
                        const std::vector<Eigen::Index>& members) {
  double sum = 0;
  for (auto k : members) sum += values[k];
  return members.size() == 1 ? std::string(singular) + " " + format_mass(sum)
                             : std::string(plural) + " " + format_mass(sum) + " in all";
}

std::string unused_rows_and_columns(const TransportProblem& p) {
  const AccessMask& access = *p.access;
  std::vector<Eigen::Index> lonely_agents, lonely_partners;
  for (Eigen::Index i = 0; i < p.agents(); ++i) {
    if ((access.row(i).array() == 0).all()) lonely_agents.push_back(i);
  }
  for (Eigen::Index j = 0; j < p.partners(); ++j) {
    if ((access.col(j).array() == 0).all()) lonely_partners.push_back(j);
  }
  std::string text;
  if (!lonely_agents.empty()) {
    text = name_group("agent", lonely_agents) + " may use no partner (all-zero access row" +
           (lonely_agents.size() == 1 ? "" : "s") + ")";
  }
  if (!lonely_partners.empty()) {
    if (!text.empty()) text += "; ";
    text += name_group("partner", lonely_partners) +
            " may be used by no agent (all-zero access column" +
            (lonely_partners.size() == 1 ? "" : "s") + ")";
  }
  return text;
}

// Partners that at least one of `agents` may use, and agents that may use at
// least one of `partners`.
std::vector<Eigen::Index> partners_of(const TransportProblem& p,
                                      const std::vector<Eigen::Index>& agents) {
  std::vector<Eigen::Index> partners;
  for (Eigen::Index j = 0; j < p.partners(); ++j) {
    for (auto i : agents) {
      if (p.allowed(i, j)) {
        partners.push_back(j);
        break;
      }
    }
  }
  return partners;
}

std::vector<Eigen::Index> agents_of(const TransportProblem& p,
                                    const std::vector<Eigen::Index>& partners) {
  std::vector<Eigen::Index> agents;
  for (Eigen::Index i = 0; i < p.agents(); ++i) {
    for (auto j : partners) {
      if (p.allowed(i, j)) {
        agents.push_back(i);
        break;
      }
    }
  }
  return agents;
}

// Hall's condition fails for `group` (agents on the source side of a minimum
// cut). Names the group or, when shorter, the converse group of partners.
std::string describe_hall_violation(const TransportProblem& p,
                                    const std::vector<Eigen::Index>& group) {
  const auto reachable = partners_of(p, group);
  std::vector<Eigen::Index> others;  // partners the group cannot use
  for (Eigen::Index j = 0, k = 0; j < p.partners(); ++j) {
    if (k < static_cast<Eigen::Index>(reachable.size()) && reachable[k] == j)
      ++k;
    else
      others.push_back(j);
  }
  const auto users = agents_of(p, others);
  if (others.empty() || group.size() + reachable.size() <= others.size() + users.size()) {
    return name_group("agent", group) + " (" + mass_phrase("budget", "budgets", p.budgets, group) +
           ") may only use " + name_group("partner", reachable) + " (" +
           mass_phrase("capacity", "capacities", p.capacities, reachable) + ")";
  }
  return name_group("partner", others) + " (" +
         mass_phrase("capacity", "capacities", p.capacities, others) + ") may only be used by " +
         name_group("agent", users) + " (" + mass_phrase("budget", "budgets", p.budgets, users) +
         ")";
}

bool has_forbidden_cell(const TransportProblem& p) {
  return p.access && (p.access->array() == 0).any();
}

// ---------------------------------------------------------------------------
// The network simplex on the bipartite graph agents -> partners.

class TransportNetwork {
 public:
  TransportNetwork(const TransportProblem& p, const AllowedCells& cells)
      : problem_(p),
        cells_(cells),
        n_(static_cast<int>(p.agents())),
        m_(static_cast<int>(p.partners())) {
    graph_.reserveNode(n_ + m_);
    graph_.reserveArc(static_cast<int>(cells.partner.size()));
    for (int k = 0; k < n_ + m_; ++k) graph_.addNode();
    for (int i = 0; i < n_; ++i) {
      for (int k = cells.row_start[i]; k < cells.row_start[i + 1]; ++k) {
        graph_.addArc(graph_.nodeFromId(i), graph_.nodeFromId(n_ + cells.partner[k]));
      }
    }
    simplex_.emplace(graph_);  // copies the graph's structure, so only now
  }

  // Costs are (largest gain - gain) / scale >= 0: LEMON sizes its artificial
  // arcs from the largest cost, and a constant shift or a positive factor
  // does not move the optimum. The scale (the largest absolute gain) keeps
  // the costs in [0, 2] for any finite gains, even +-1e308.
  bool run(const std::vector<Units>& supply, const std::vector<Units>& demand) {
    largest_gain_ = -std::numeric_limits<double>::infinity();
    scale_ = 0;
    for (int i = 0; i < n_; ++i) {
      for (int k = cells_.row_start[i]; k < cells_.row_start[i + 1]; ++k) {
        const double gain = problem_.gains(i, cells_.partner[k]);
        largest_gain_ = std::max(largest_gain_, gain);
        scale_ = std::max(scale_, std::abs(gain));
      }
    }
    // Scaled only where the costs could overflow: unscaled whole-number gains
    // keep whole-number costs, on which the simplex does not stall on ties.
    if (!(scale_ > kScaleAbove)) scale_ = 1;
    Graph::ArcMap<double> cost(graph_);
    for (int i = 0, a = 0; i < n_; ++i) {
      for (int k = cells_.row_start[i]; k < cells_.row_start[i + 1]; ++k, ++a) {
        cost[graph_.arcFromId(a)] =
            largest_gain_ / scale_ - problem_.gains(i, cells_.partner[k]) / scale_;
      }
    }
    return solve_with(cost, supply, demand);
  }

  // Solves again with other supplies (same costs).
  bool rerun(const std::vector<Units>& supply, const std::vector<Units>& demand) {
    Graph::NodeMap<Units> node_supply(graph_);
    set_supplies(node_supply, supply, demand);
    simplex_->supplyMap(node_supply);
    return simplex_->run() == Simplex::OPTIMAL;
  }

  // Flows scaled by `unit_mass` into an n x m matrix.
  Matrix coupling(double unit_mass) const {
    Matrix pi = Matrix::Zero(n_, m_);
    for (int i = 0; i < n_; ++i) {
      for (int k = cells_.row_start[i]; k < cells_.row_start[i + 1]; ++k) {
        const Units f = simplex_->flow(graph_.arcFromId(k));
        if (f > 0) pi(i, cells_.partner[k]) = static_cast<double>(f) * unit_mass;
      }
    }
    return pi;
  }

  // LEMON's optimum has (largest - gain_ij) / scale + pi_i - pi_j >= 0,
  // equality on the support; hence u_i = scale pi_i + largest, v_j = -scale pi_j.
  void potentials(Vector& agent, Vector& partner) const {
    agent.resize(n_);
    partner.resize(m_);
    for (int i = 0; i < n_; ++i)
      agent[i] = scale_ * simplex_->potential(graph_.nodeFromId(i)) + largest_gain_;
    for (int j = 0; j < m_; ++j)
      partner[j] = -scale_ * simplex_->potential(graph_.nodeFromId(n_ + j));
  }

 private:
  bool solve_with(const Graph::ArcMap<double>& cost, const std::vector<Units>& supply,
                  const std::vector<Units>& demand) {
    Graph::NodeMap<Units> node_supply(graph_);
    set_supplies(node_supply, supply, demand);
    simplex_->costMap(cost).supplyMap(node_supply);
    return simplex_->run() == Simplex::OPTIMAL;
  }

  void set_supplies(Graph::NodeMap<Units>& node_supply, const std::vector<Units>& supply,
                    const std::vector<Units>& demand) const {
    for (int i = 0; i < n_; ++i) node_supply[graph_.nodeFromId(i)] = supply[i];
    for (int j = 0; j < m_; ++j) node_supply[graph_.nodeFromId(n_ + j)] = -demand[j];
  }

  const TransportProblem& problem_;
  const AllowedCells& cells_;
  int n_, m_;
  Graph graph_;
  double largest_gain_ = 0;
  double scale_ = 1;
  std::optional<Simplex> simplex_;
};

// ---------------------------------------------------------------------------

double relative_marginal_error(const TransportProblem& p, const Matrix& pi) {
  return ((pi.rowwise().sum() - p.budgets).lpNorm<1>() +
          (pi.colwise().sum().transpose() - p.capacities).lpNorm<1>()) /
         p.budgets.sum();
}

// On a forest support the marginals fix every flow: peeling leaves one at a
// time, a leaf's remaining mass is the flow on its only link. Recomputing the
// flows this way from the real (unrounded) budgets and capacities makes the
// marginals exact to floating-point rounding instead of to total/mass_units,
// and whole-number masses give whole-number flows. Returns false (leaving
// `coupling` as it was) if a flow would come out negative.
bool refit_on_forest(const TransportProblem& p, Matrix& coupling) {
  const Eigen::Index n = p.agents(), m = p.partners();
  std::vector<std::pair<Eigen::Index, Eigen::Index>> links;
  std::vector<std::vector<std::size_t>> links_at(static_cast<std::size_t>(n + m));
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < m; ++j) {
      if (coupling(i, j) <= 0) continue;
      links_at[static_cast<std::size_t>(i)].push_back(links.size());
      links_at[static_cast<std::size_t>(n + j)].push_back(links.size());
      links.emplace_back(i, j);
    }
  }
  std::vector<double> remaining(static_cast<std::size_t>(n + m));
  for (Eigen::Index i = 0; i < n; ++i) remaining[static_cast<std::size_t>(i)] = p.budgets[i];
  for (Eigen::Index j = 0; j < m; ++j) remaining[static_cast<std::size_t>(n + j)] = p.capacities[j];
  std::vector<std::size_t> degree(links_at.size());
  std::vector<std::size_t> leaves;
  for (std::size_t v = 0; v < links_at.size(); ++v) {
    degree[v] = links_at[v].size();
    if (degree[v] == 1) leaves.push_back(v);
  }
  std::vector<bool> done(links.size(), false);
  Matrix refitted = Matrix::Zero(n, m);
  const double tolerance = 1e-9 * p.total_mass();
  while (!leaves.empty()) {
    const std::size_t v = leaves.back();
    leaves.pop_back();
    if (degree[v] != 1) continue;
    std::size_t e = 0;
    for (const std::size_t candidate : links_at[v]) {
      if (!done[candidate]) e = candidate;
    }
    const auto [i, j] = links[e];
    const double flow = remaining[v];
    if (flow < -tolerance) return false;
    refitted(i, j) = std::max(flow, 0.0);
    done[e] = true;
    const std::size_t other = v < static_cast<std::size_t>(n) ? static_cast<std::size_t>(n + j)
                                                              : static_cast<std::size_t>(i);
    remaining[other] -= flow;
    remaining[v] = 0;
    degree[v] = 0;
    if (--degree[other] == 1) leaves.push_back(other);
  }
  if (std::find(done.begin(), done.end(), false) != done.end()) return false;  // a cycle
  coupling = std::move(refitted);
  return true;
}

void fill_solution(const TransportProblem& p, const TransportNetwork& network, double unit_mass,
                   ExactResult& result) {
  result.status = ExactStatus::optimal;
  result.coupling = network.coupling(unit_mass);
  refit_on_forest(p, result.coupling);
  network.potentials(result.agent_potential, result.partner_potential);
  result.total_gain = total_gain(p, result.coupling);
  result.support_size = static_cast<long>((result.coupling.array() > 0).count());
  result.support_is_forest = support_is_forest(result.coupling);
  result.marginal_error = relative_marginal_error(p, result.coupling);
}

// Agents and partners whose mass fell below total/mass_units round to zero
// units and get no flow; says which (indices from 1), or "" when none.
std::string unshipped_masses(const TransportProblem& p, const Matrix& coupling, double units) {
  const auto list = [](const std::vector<Eigen::Index>& indices) {
    std::string text;
    for (std::size_t k = 0; k < indices.size() && k < 5; ++k) {
      text += (k ? ", " : "") + std::to_string(indices[k] + 1);
    }
    if (indices.size() > 5) text += " and " + std::to_string(indices.size() - 5) + " more";
    return text;
  };
  std::vector<Eigen::Index> agents, partners;
  for (Eigen::Index i = 0; i < p.agents(); ++i) {
    if (!(coupling.row(i).sum() > 0)) agents.push_back(i);
  }
  for (Eigen::Index j = 0; j < p.partners(); ++j) {
    if (!(coupling.col(j).sum() > 0)) partners.push_back(j);
  }
  if (agents.empty() && partners.empty()) return "";
  std::string text;
  if (!agents.empty()) text += "the budgets of agents " + list(agents);
  if (!partners.empty()) {
    text += std::string(text.empty() ? "the" : " and the") + " capacities of partners " +
            list(partners);
  }
  return text + " lie below total/mass_units (" + format_mass(1.0 / units) +
         " of the total mass) and were left unshipped; raise mass_units (at "
         "most 1e15)";
}

ExactResult infeasible_result(const TransportProblem& p, std::string message) {
  ExactResult result;
  result.status = ExactStatus::infeasible;
  result.message = std::move(message);
  result.coupling = Matrix::Zero(p.agents(), p.partners());
  result.agent_potential = Vector::Zero(p.agents());
  result.partner_potential = Vector::Zero(p.partners());
  result.marginal_error = 1;
  return result;
}

// Union-find over agents 0..n-1 and partners n..n+m-1.
class DisjointSets {
 public:
  explicit DisjointSets(Eigen::Index size) : parent_(static_cast<std::size_t>(size)) {
    std::iota(parent_.begin(), parent_.end(), Eigen::Index{0});
  }
  Eigen::Index find(Eigen::Index x) {
    while (parent_[x] != x) x = parent_[x] = parent_[parent_[x]];
    return x;
  }
  // False when a and b were already joined.
  bool join(Eigen::Index a, Eigen::Index b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    parent_[a] = b;
    return true;
  }

 private:
  std::vector<Eigen::Index> parent_;
};

}  // namespace

// ---------------------------------------------------------------------------

void ExactOptions::validate() const {
  if (!(mass_units >= 1e3 && mass_units <= 1e15)) {
    throw InputError("mass_units",
                     "is " + format_mass(mass_units) + "; it must lie in [1e3, 1e15]");
  }
}

constexpr EnumWord<ExactStatus> kExactStatusWords[] = {{ExactStatus::optimal, "optimal"},
                                                       {ExactStatus::infeasible, "infeasible"}};

std::string to_string(ExactStatus value) { return word_of(value, kExactStatusWords); }

ExactStatus exact_status_from_string(const std::string& text) {
  return value_of(text, kExactStatusWords, "exact status");
}

std::string ExactResult::brief() const {
  std::ostringstream out;
  out.precision(8);
  out << "exact: " << to_string(status);
  if (status == ExactStatus::optimal) {
    out << ", total gain " << total_gain << ", " << support_size
        << (support_size == 1 ? " link" : " links")
        << (support_is_forest ? " (forest)" : " (not a forest)");
  } else if (!message.empty()) {
    out << ": " << message;
  }
  out.precision(3);
  out << ", " << seconds * 1e3 << " ms";
  return out.str();
}

bool support_is_forest(const Matrix& coupling, double threshold) {
  const Eigen::Index n = coupling.rows();
  DisjointSets sets(n + coupling.cols());
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < coupling.cols(); ++j) {
      if (coupling(i, j) > threshold && !sets.join(i, n + j)) return false;
    }
  }
  return true;
}

std::string explain_infeasibility(const TransportProblem& p) {
  validate(p);
  if (!has_forbidden_cell(p)) return "";
  std::string text = unused_rows_and_columns(p);
  if (!text.empty()) return text;
  const auto units = static_cast<Units>(kFeasibilityUnits);
  const FlowCheck check = max_flow_check(allowed_cells(p), round_to_units(p.budgets, units),
                                         round_to_units(p.capacities, units), false);
  // Each node's rounding moves a cut by less than one unit.
  const double slack =
      kFeasibilityTolerance * kFeasibilityUnits + static_cast<double>(p.agents() + p.partners());
  if (static_cast<double>(units - check.max_flow) <= slack) return "";
  std::vector<Eigen::Index> group;
  for (Eigen::Index i = 0; i < p.agents(); ++i) {
    if (check.agent_on_source_side[i]) group.push_back(i);
  }
  return describe_hall_violation(p, group);
}

// The cheap checks (an agent or partner without any allowed pair) run first;
// the max-flow check for a violated group runs only when the simplex finds
// the rounded network infeasible, since on a feasible problem it would only
// repeat, at about half the simplex's cost, what the simplex establishes.
ExactResult solve_exact(const TransportProblem& p, const ExactOptions& options) {
  const auto start = Clock::now();
  options.validate();
  validate(p);
  const auto finish = [&](ExactResult result) {
    result.seconds = seconds_since(start);
    return result;
  };
  if (has_forbidden_cell(p)) {
    std::string reason = unused_rows_and_columns(p);
    if (!reason.empty()) return finish(infeasible_result(p, std::move(reason)));
  }
  const auto units = static_cast<Units>(std::llround(options.mass_units));
  const std::vector<Units> supply = round_to_units(p.budgets, units);
  const std::vector<Units> demand = round_to_units(p.capacities, units);
  const AllowedCells cells = allowed_cells(p);
  TransportNetwork network(p, cells);
  if (!network.run(supply, demand)) {
    std::string reason = explain_infeasibility(p);
    if (!reason.empty()) return finish(infeasible_result(p, std::move(reason)));
    // Feasible within tolerance, but the rounded masses break a tight group:
    // ship what the rounded network can carry (a few units short).
    const FlowCheck check = max_flow_check(cells, supply, demand, true);
    if (!network.rerun(check.agent_flow, check.partner_flow)) {
      return finish(infeasible_result(p, "the network simplex found no feasible coupling"));
    }
  }
  ExactResult result;
  fill_solution(p, network, p.total_mass() / static_cast<double>(units), result);
  result.message = unshipped_masses(p, result.coupling, static_cast<double>(units));
  return finish(std::move(result));
}

}  // namespace allocsim
