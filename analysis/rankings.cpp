#include "allocsim/analysis/rankings.hpp"

#include <Eigen/Sparse>
#include <algorithm>
#include <cmath>
#include <numeric>
#include <sstream>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

using Index = Eigen::Index;
using SparseRows = Eigen::SparseMatrix<double, Eigen::RowMajor>;

// Eigenvalues closer than this count as equal (they lie in [0, 1]).
constexpr double kEigenGapTolerance = 1e-9;

// Rows and columns that have at least one link, and the links among them.
struct ActivePart {
  std::vector<Index> rows;
  std::vector<Index> columns;
  Matrix links;  // rows.size() x columns.size(), 0/1
};

ActivePart active_part(const BinaryMatrix& links) {
  ActivePart part;
  const Eigen::VectorXi k = row_degrees(links);
  const Eigen::VectorXi h = column_degrees(links);
  for (Index i = 0; i < links.rows(); ++i)
    if (k(i) > 0) part.rows.push_back(i);
  for (Index j = 0; j < links.cols(); ++j)
    if (h(j) > 0) part.columns.push_back(j);
  part.links.resize(static_cast<Index>(part.rows.size()), static_cast<Index>(part.columns.size()));
  for (std::size_t a = 0; a < part.rows.size(); ++a)
    for (std::size_t b = 0; b < part.columns.size(); ++b)
      part.links(a, b) = links(part.rows[a], part.columns[b]);
  return part;
}

// Scatters values of the active part back to full length (others 0).
Vector scatter(const Vector& values, const std::vector<Index>& where, Index size) {
  Vector full = Vector::Zero(size);
  for (std::size_t a = 0; a < where.size(); ++a) full(where[a]) = values(static_cast<Index>(a));
  return full;
}

// Relative change between iterates, over scores at or above `floor` in both.
double relative_change(const Vector& before, const Vector& after, double floor) {
  double change = 0;
  for (Index k = 0; k < after.size(); ++k) {
    if (after(k) < floor || before(k) < floor) continue;
    change = std::max(change, std::abs(after(k) - before(k)) / after(k));
  }
  return change;
}

void count_falls(const Vector& before, const Vector& after, std::vector<long>& streak) {
  for (Index k = 0; k < after.size(); ++k)
    streak[static_cast<std::size_t>(k)] = after(k) < before(k) ? streak[k] + 1 : 0;
}

std::vector<Index> decaying(const Vector& scores, const std::vector<long>& streak, bool settled,
                            long iterations, const FitnessComplexityOptions& options,
                            const std::vector<Index>& where) {
  std::vector<Index> found;
  for (Index k = 0; k < scores.size(); ++k) {
    const bool vanished = scores(k) < options.zero_threshold;
    const bool falling = !settled && iterations >= 2 && streak[k] >= iterations / 2;
    if (vanished || falling) found.push_back(where[static_cast<std::size_t>(k)]);
  }
  return found;
}

// Mean 0, population standard deviation 1; false when the spread is zero.
bool standardise(Vector& values) {
  const double mean = values.mean();
  values.array() -= mean;
  const double sd = std::sqrt(values.squaredNorm() / static_cast<double>(values.size()));
  if (!(sd > 1e-300)) {
    values.setZero();
    return false;
  }
  values /= sd;
  return true;
}

double covariance(const Vector& a, const Vector& b) {
  return ((a.array() - a.mean()) * (b.array() - b.mean())).sum();
}

struct SecondEigen {
  Vector row_vector;     // eigenvector of W_rows for the second eigenvalue
  Vector column_vector;  // the matching eigenvector of W_columns
  double second = 0;
  double gap = 0;
};

// Solves the symmetric form on the smaller side and maps to the other side.
SecondEigen second_eigenvectors(const Matrix& m) {
  const Vector k = m.rowwise().sum();
  const Vector h = m.colwise().sum().transpose();
  const bool rows_side = m.rows() <= m.cols();
  const Eigen::MatrixXd a = m;  // column-major copy for the dense products
  Eigen::MatrixXd s;
  if (rows_side) {
    const Eigen::MatrixXd b = k.cwiseSqrt().cwiseInverse().asDiagonal() * a;  // D^-1/2 M
    s = b * h.cwiseInverse().asDiagonal() * b.transpose();
  } else {
    const Eigen::MatrixXd b = a * h.cwiseSqrt().cwiseInverse().asDiagonal();  // M H^-1/2
    s = b.transpose() * k.cwiseInverse().asDiagonal() * b;
  }
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> solver(s);
  const Index size = s.rows();
  const Vector& values = solver.eigenvalues();  // increasing
  SecondEigen result;
  result.second = values(size - 2);
  const double other_side =
      rows_side ? static_cast<double>(m.cols()) : static_cast<double>(m.rows());
  double third = size >= 3 ? values(size - 3) : (other_side > size ? 0.0 : -1.0);
  result.gap = values(size - 1) - values(size - 2);
  if (third >= 0) result.gap = std::min(result.gap, values(size - 2) - third);
  const Vector u = solver.eigenvectors().col(size - 2);
  if (rows_side) {
    result.row_vector = k.cwiseSqrt().cwiseInverse().asDiagonal() * u;
    result.column_vector = h.cwiseInverse().asDiagonal() * (a.transpose() * result.row_vector);
  } else {
    result.column_vector = h.cwiseSqrt().cwiseInverse().asDiagonal() * u;
    result.row_vector = k.cwiseInverse().asDiagonal() * (a * result.column_vector);
  }
  return result;
}

}  // namespace

Ordering order_by_score(const Vector& scores) {
  Ordering order(static_cast<std::size_t>(scores.size()));
  std::iota(order.begin(), order.end(), Index{0});
  std::stable_sort(order.begin(), order.end(),
                   [&](Index a, Index b) { return scores(a) > scores(b); });
  return order;
}

Ordering row_degree_order(const BinaryMatrix& links) {
  return order_by_score(row_degrees(links).cast<double>());
}

Ordering column_degree_order(const BinaryMatrix& links) {
  return order_by_score(column_degrees(links).cast<double>());
}

void FitnessComplexityOptions::validate() const {
  if (!(tolerance > 0 && tolerance < 1)) throw InputError("tolerance", "must be in (0, 1)");
  if (max_iterations < 1) throw InputError("max_iterations", "must be at least 1");
  if (!(zero_threshold > 0 && zero_threshold < 1))
    throw InputError("zero_threshold", "must be in (0, 1)");
}

constexpr EnumWord<FitnessComplexityStatus> kFitnessComplexityStatusWords[] = {
    {FitnessComplexityStatus::converged, "converged"},
    {FitnessComplexityStatus::scores_decay, "scores_decay"},
    {FitnessComplexityStatus::not_converged, "not_converged"},
    {FitnessComplexityStatus::no_links, "no_links"}};

std::string to_string(FitnessComplexityStatus value) {
  return word_of(value, kFitnessComplexityStatusWords);
}

FitnessComplexityStatus fitness_complexity_status_from_string(const std::string& text) {
  return value_of(text, kFitnessComplexityStatusWords, "status");
}

std::string FitnessComplexityResult::brief() const {
  std::ostringstream out;
  out << "fitness-complexity: " << to_string(status) << " after " << iterations
      << " iterations (last relative change " << last_change << ")";
  if (!decaying_rows.empty() || !decaying_columns.empty())
    out << "; " << decaying_rows.size() << " row and " << decaying_columns.size()
        << " column scores decay towards zero";
  return out.str();
}

FitnessComplexityResult fitness_complexity(const BinaryMatrix& links,
                                           const FitnessComplexityOptions& options) {
  options.validate();
  FitnessComplexityResult result;
  const ActivePart part = active_part(links);
  const Index n = static_cast<Index>(part.rows.size());
  const Index m = static_cast<Index>(part.columns.size());
  if (n == 0) {
    result.status = FitnessComplexityStatus::no_links;
    result.message = "the matrix has no link";
    result.fitness = Vector::Zero(links.rows());
    result.complexity = Vector::Zero(links.cols());
    result.row_order = order_by_score(result.fitness);
    result.column_order = order_by_score(result.complexity);
    return result;
  }
  // Sparse products touch only links, so a fitness that underflows to 0
  // gives complexity 1/inf = 0 for its partners instead of 0 * inf = NaN.
  const SparseRows m_rows = part.links.sparseView();
  const SparseRows m_columns = SparseRows(part.links.transpose().sparseView());
  Vector fitness = Vector::Ones(n);
  Vector complexity = Vector::Ones(m);
  std::vector<long> row_falls(static_cast<std::size_t>(n), 0);
  std::vector<long> column_falls(static_cast<std::size_t>(m), 0);
  bool settled = false;
  for (long t = 1; t <= options.max_iterations && !settled; ++t) {
    Vector next_fitness = m_rows * complexity;
    Vector next_complexity = (m_columns * fitness.cwiseInverse()).cwiseInverse();
    next_fitness /= next_fitness.mean();
    next_complexity /= next_complexity.mean();
    result.last_change =
        std::max(relative_change(fitness, next_fitness, options.zero_threshold),
                 relative_change(complexity, next_complexity, options.zero_threshold));
    count_falls(fitness, next_fitness, row_falls);
    count_falls(complexity, next_complexity, column_falls);
    fitness = next_fitness;
    complexity = next_complexity;
    result.iterations = t;
    settled = result.last_change <= options.tolerance;
  }
  result.decaying_rows =
      decaying(fitness, row_falls, settled, result.iterations, options, part.rows);
  result.decaying_columns =
      decaying(complexity, column_falls, settled, result.iterations, options, part.columns);
  result.fitness = scatter(fitness, part.rows, links.rows());
  result.complexity = scatter(complexity, part.columns, links.cols());
  result.row_order = order_by_score(result.fitness);
  result.column_order = order_by_score(result.complexity);

  std::ostringstream message;
  if (!result.decaying_rows.empty() || !result.decaying_columns.empty()) {
    result.status = FitnessComplexityStatus::scores_decay;
    message << result.decaying_rows.size() << " of " << n << " row and "
            << result.decaying_columns.size() << " of " << m
            << " column scores decay towards zero; orderings are those of iteration "
            << result.iterations;
  } else if (settled) {
    result.status = FitnessComplexityStatus::converged;
    message << "scores settled to a relative change of " << result.last_change;
  } else {
    result.status = FitnessComplexityStatus::not_converged;
    message << "iteration limit " << options.max_iterations << " reached with relative change "
            << result.last_change;
  }
  if (n < links.rows() || m < links.cols())
    message << "; " << (links.rows() - n) << " rows and " << (links.cols() - m)
            << " columns without links score 0";
  result.message = message.str();
  return result;
}

constexpr EnumWord<ComplexityIndexStatus> kComplexityIndexStatusWords[] = {
    {ComplexityIndexStatus::computed, "computed"},
    {ComplexityIndexStatus::degenerate, "degenerate"},
    {ComplexityIndexStatus::no_links, "no_links"}};

std::string to_string(ComplexityIndexStatus value) {
  return word_of(value, kComplexityIndexStatusWords);
}

ComplexityIndexStatus complexity_index_status_from_string(const std::string& text) {
  return value_of(text, kComplexityIndexStatusWords, "status");
}

std::string ComplexityIndexResult::brief() const {
  std::ostringstream out;
  out << "ECI: " << to_string(status) << " (second eigenvalue " << second_eigenvalue << ", gap "
      << eigen_gap << ")";
  return out.str();
}

ComplexityIndexResult economic_complexity_index(const BinaryMatrix& links) {
  ComplexityIndexResult result;
  result.row_index = Vector::Zero(links.rows());
  result.column_index = Vector::Zero(links.cols());
  const ActivePart part = active_part(links);
  const Index n = static_cast<Index>(part.rows.size());
  const Index m = static_cast<Index>(part.columns.size());
  auto finish = [&](ComplexityIndexStatus status, const std::string& message) {
    result.status = status;
    result.message = message;
    result.row_order = order_by_score(result.row_index);
    result.column_order = order_by_score(result.column_index);
    return result;
  };
  if (n == 0) return finish(ComplexityIndexStatus::no_links, "the matrix has no link");
  if (n < 2 || m < 2)
    return finish(ComplexityIndexStatus::degenerate,
                  "fewer than two rows or columns with links: no second eigenvector");

  SecondEigen eigen = second_eigenvectors(part.links);
  result.second_eigenvalue = eigen.second;
  result.eigen_gap = eigen.gap;
  const Vector diversity = part.links.rowwise().sum();
  const double agreement = covariance(eigen.row_vector, diversity);
  if (agreement < 0) {
    eigen.row_vector = -eigen.row_vector;
    eigen.column_vector = -eigen.column_vector;
  }
  const bool rows_spread = standardise(eigen.row_vector);
  const bool columns_spread = standardise(eigen.column_vector);
  result.row_index = scatter(eigen.row_vector, part.rows, links.rows());
  result.column_index = scatter(eigen.column_vector, part.columns, links.cols());

  std::ostringstream message;
  ComplexityIndexStatus status = ComplexityIndexStatus::computed;
  if (eigen.gap < kEigenGapTolerance || !rows_spread || !columns_spread) {
    status = ComplexityIndexStatus::degenerate;
    message << "the second eigenvalue " << eigen.second
            << " is not separated from its neighbours (gap " << eigen.gap
            << "); the indices are one of several choices";
  } else {
    message << "second eigenvalue " << eigen.second << ", gap " << eigen.gap;
  }
  if (std::abs(agreement) < 1e-12)
    message << "; uncorrelated with diversity, so the sign is arbitrary";
  if (n < links.rows() || m < links.cols())
    message << "; " << (links.rows() - n) << " rows and " << (links.cols() - m)
            << " columns without links score 0";
  return finish(status, message.str());
}

GradientOrder correspondence_order(const Matrix& weights) {
  constexpr int kIterations = 300;
  const Vector r = weights.rowwise().sum();
  const Vector c = weights.colwise().sum().transpose();
  const double total = r.sum();
  GradientOrder order;
  order.row_scores = Vector::Zero(r.size());
  order.column_scores = Vector::Zero(c.size());
  if (total > 0) {
    const Vector sr = (r / total).cwiseSqrt(), sc = (c / total).cwiseSqrt();
    const Vector inv_r = (r.array() > 0).select(1.0 / (r.array() / total).sqrt(), 0.0);
    const Vector inv_c = (c.array() > 0).select(1.0 / (c.array() / total).sqrt(), 0.0);
    const Matrix a = inv_r.asDiagonal() * (weights / total) * inv_c.asDiagonal();
    // Power iteration on A A^T with the trivial pair (sr, sc; value 1) projected out.
    Vector u = Vector::LinSpaced(r.size(), -1.0, 1.0).cwiseProduct(sr);
    Vector v(c.size());
    for (int k = 0; k < kIterations; ++k) {
      v = a.transpose() * u;
      v -= sc.dot(v) * sc;
      u = a * v;
      u -= sr.dot(u) * sr;
      const double norm = u.norm();
      if (!(norm > 0)) break;
      u /= norm;
    }
    order.row_scores = u.cwiseProduct(inv_r);
    order.column_scores = v.cwiseProduct(inv_c);
    Eigen::Index heaviest = 0;
    r.maxCoeff(&heaviest);
    const double median = [&] {
      std::vector<double> sorted(order.row_scores.data(), order.row_scores.data() + r.size());
      std::nth_element(sorted.begin(), sorted.begin() + sorted.size() / 2, sorted.end());
      return sorted[sorted.size() / 2];
    }();
    if (order.row_scores[heaviest] > median) {
      order.row_scores = -order.row_scores;
      order.column_scores = -order.column_scores;
    }
  }
  const auto ascending = [](const Vector& scores, const Vector& mass) {
    Ordering o(static_cast<std::size_t>(scores.size()));
    std::iota(o.begin(), o.end(), Eigen::Index{0});
    std::stable_sort(o.begin(), o.end(), [&](Eigen::Index a, Eigen::Index b) {
      if ((mass[a] > 0) != (mass[b] > 0)) return mass[a] > 0;
      return scores[a] < scores[b];
    });
    return o;
  };
  order.rows = ascending(order.row_scores, r);
  order.columns = ascending(order.column_scores, c);
  return order;
}

}  // namespace allocsim
