#include "allocsim/analysis/report_exports.hpp"

#include <filesystem>
#include <ostream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/label_alignment.hpp"
#include "allocsim/core/output_file.hpp"

namespace allocsim {
namespace {

// A CSV field, quoted when it holds a separator, a quote or a line break.
std::string field(const std::string& text) {
  if (text.find_first_of(",;\t\"\n") == std::string::npos) return text;
  std::string out = "\"";
  for (const char ch : text) out += ch == '"' ? std::string("\"\"") : std::string(1, ch);
  return out + "\"";
}

std::vector<std::string> kept_names(const AllocationReport& r, const Ordering& order, bool agents) {
  const auto& kept = agents ? r.observed.kept_rows : r.observed.kept_columns;
  std::vector<std::string> out;
  for (const Eigen::Index k : order) {
    const Eigen::Index input = kept[static_cast<std::size_t>(k)];
    out.push_back(agents ? r.agent_name(input) : r.partner_name(input));
  }
  return out;
}

Matrix nested(const Matrix& kept, const AllocationReport& r) {
  return reorder_columns(reorder_rows(kept, r.structure.nested_rows), r.structure.nested_columns);
}

class Exporter {
 public:
  Exporter(const AllocationReport& r, std::string folder) : r_(r), folder_(std::move(folder)) {
    rows_ = kept_names(r, r.structure.nested_rows, true);
    columns_ = kept_names(r, r.structure.nested_columns, false);
  }

  void matrix(const std::string& name, const Matrix& kept) {
    write_matrix_csv(path(name), nested(kept, r_), rows_, columns_);
  }

  void ordering(const std::string& name, bool agents) {
    const Orderings& o = r_.orderings;
    const Ordering& order = agents ? o.fitness.row_order : o.fitness.column_order;
    const Ordering& by_index = agents ? o.complexity.row_order : o.complexity.column_order;
    std::vector<long> index_rank(order.size());
    for (std::size_t k = 0; k < by_index.size(); ++k)
      index_rank[static_cast<std::size_t>(by_index[k])] = static_cast<long>(k + 1);
    const Vector totals =
        agents ? Vector(r_.values.rowwise().sum()) : Vector(r_.values.colwise().sum().transpose());
    const std::vector<std::string> names = kept_names(r_, order, agents);
    AtomicFile file(path(name));
    std::ostream& out = file.stream();
    out << (agents ? "label,rank,degree,fitness,eci,eci_rank,total\n"
                   : "label,rank,degree,complexity,pci,pci_rank,total\n");
    for (std::size_t k = 0; k < order.size(); ++k) {
      const Eigen::Index a = order[k];
      out << field(names[k]) << ',' << k + 1 << ','
          << (agents ? o.agent_degrees : o.partner_degrees)(a) << ','
          << format_number((agents ? o.fitness.fitness : o.fitness.complexity)(a)) << ','
          << format_number((agents ? o.complexity.row_index : o.complexity.column_index)(a)) << ','
          << index_rank[static_cast<std::size_t>(a)] << ',' << format_number(totals(a)) << '\n';
    }
    file.commit();
  }

  void left_out(const std::string& name) {
    AtomicFile file(path(name));
    file.stream() << "side,label\n";
    for (const Eigen::Index i : r_.observed.dropped_rows)
      file.stream() << "agent," << field(r_.agent_name(i)) << '\n';
    for (const Eigen::Index j : r_.observed.dropped_columns)
      file.stream() << "partner," << field(r_.partner_name(j)) << '\n';
    file.commit();
  }

  void nulls(const std::string& name) {
    AtomicFile file(path(name));
    std::ostream& out = file.stream();
    out << "metric,model,samples,seed,observed,null_mean,null_sd,z_score,p_upper,p_two_sided\n";
    const auto row = [&out](const char* metric, const NullComparison& c) {
      out << metric << ',' << to_string(c.model) << ',' << c.samples << ',' << c.seed << ','
          << format_number(c.observed) << ',' << format_number(c.null_mean) << ','
          << format_number(c.null_sd) << ',' << format_number(c.z_score) << ','
          << format_number(c.p_upper) << ',' << format_number(c.p_two_sided) << '\n';
    };
    if (r_.structure.nodf_null) row("nodf", *r_.structure.nodf_null);
    if (r_.structure.wnodf_null) row("wnodf", *r_.structure.wnodf_null);
    file.commit();
  }

  const std::vector<std::string>& written() const { return written_; }

 private:
  std::string path(const std::string& name) {
    written_.push_back((std::filesystem::path(folder_) / name).string());
    return written_.back();
  }

  const AllocationReport& r_;
  std::string folder_;
  std::vector<std::string> rows_, columns_;
  std::vector<std::string> written_;
};

}  // namespace

const std::vector<std::string>& report_export_names() {
  static const std::vector<std::string> names = {
      "matrix_nested.csv",     "links_nested.csv",   "agents.csv",
      "partners.csv",          "left_out.csv",       "coupling_exact.csv",
      "coupling_entropic.csv", "null_comparison.csv"};
  return names;
}

std::vector<std::string> export_report(const AllocationReport& r, const std::string& folder) {
  NewFolder made(folder, folder);  // removed again when every export fails
  Exporter e(r, folder);
  e.matrix("matrix_nested.csv", r.values);
  e.matrix("links_nested.csv", to_matrix(r.links));
  e.ordering("agents.csv", true);
  e.ordering("partners.csv", false);
  e.left_out("left_out.csv");
  const double total = r.values.sum();
  if (r.exact.optimal()) e.matrix("coupling_exact.csv", r.exact.coupling * total);
  if (r.has_entropic) e.matrix("coupling_entropic.csv", r.temperature.coupling * total);
  if (r.structure.nodf_null || r.structure.wnodf_null) e.nulls("null_comparison.csv");
  made.keep();
  return e.written();
}

}  // namespace allocsim
