// Entropic transport against textbook numpy Sinkhorns, and the cost of one
// iteration against the machine's bounds.
#include <cmath>
#include <vector>

#include "allocsim/analysis/entropic_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

constexpr double kCompareTolerance = 1e-6;  // numpy comparisons
constexpr double kSmallTolerance = 1e-9;    // the small-epsilon target

std::string solve_text(double seconds, long iterations) {
  return format_seconds(seconds) + ", " + std::to_string(iterations) + " it";
}

std::string numpy_text(const std::string& name, const PythonAnswer& a) {
  if (!a.ok()) return name + " did not run";
  std::string text =
      name + " " + solve_text(a.number("seconds"), static_cast<long>(a.number("iterations")));
  if (a.flag("failed")) return text + " (left float range)";
  if (!a.flag("converged")) text += " (stopped at " + format_number(a.number("violation"), 2) + ")";
  return text;
}

}  // namespace

void entropic_rows(const Settings& settings, Report& report) {
  const long n = settings.quick ? 300 : 1000;
  const std::string size = "n=m=" + std::to_string(n);
  const long numpy_max_iter = settings.quick ? 2000 : 200000;
  const std::string budget = format_number(settings.python_budget, 6);
  std::vector<double> small_eps_seconds;  // geometric, tolerance 1e-9: 0.01 and 0.001

  for (GainKind kind : {GainKind::random, GainKind::geometric}) {
    const TransportProblem p = make_instance(n, n, kind, kind == GainKind::random ? 7 : 8);
    write_instance(p, settings.workdir);
    const double range = gain_range(p);
    for (double factor : {0.1, 0.01, 0.001}) {
      EntropicOptions o;
      o.epsilon = factor * range;
      o.tolerance = kCompareTolerance;
      EntropicResult ours;
      const double seconds = best_time(settings.repeats, [&] { ours = solve_entropic(p, o); });
      const std::vector<std::string> common = {settings.workdir,
                                               std::to_string(n),
                                               std::to_string(n),
                                               format_number(o.epsilon, 17),
                                               format_number(kCompareTolerance, 17),
                                               std::to_string(numpy_max_iter),
                                               budget};
      auto args = common;
      args.insert(args.begin(), "plain");
      const PythonAnswer plain = run_python(args);
      args[0] = "log";
      const PythonAnswer logd = run_python(args);

      const std::string what = to_string(kind) + " gains, eps=" + format_number(factor) +
                               " range, " + size + ", tol 1e-6";
      const std::string ours_text =
          solve_text(seconds, ours.iterations) +
          (ours.converged() ? "" : " (" + to_string(ours.status) + ")") +
          (ours.log_domain_updates ? ", " + std::to_string(ours.log_domain_updates) + " log-domain"
                                   : "");
      const auto ratio_of = [&](const PythonAnswer& a) {
        return a.ok() && !a.flag("failed") ? a.number("seconds") / seconds : 0.0;
      };
      const auto add_values = [&](Row& row, const PythonAnswer& a) {
        row.values.add("gains", to_string(kind))
            .add("epsilon_share_of_range", factor)
            .add("epsilon", o.epsilon)
            .add("n", static_cast<long long>(n))
            .add("tolerance", kCompareTolerance)
            .add("seconds", seconds)
            .add("iterations", static_cast<long long>(ours.iterations))
            .add("stages", static_cast<long long>(ours.stages))
            .add("log_domain_updates", static_cast<long long>(ours.log_domain_updates))
            .add("marginal_error", ours.marginal_error)
            .add("converged", ours.converged())
            .add("numpy_seconds", a.number("seconds"))
            .add("numpy_iterations", a.number("iterations"))
            .add("numpy_violation", a.number("violation"))
            .add("numpy_converged", a.flag("converged"))
            .add("numpy_failed", a.flag("failed"))
            .add("numpy_seconds_per_iteration", a.number("seconds_per_iteration"));
      };
      Row vs_plain{"entropic",      what + " vs numpy plain",
                   ours_text,       numpy_text("numpy plain", plain),
                   ratio_of(plain), "",
                   Verdict::info,   {}};
      add_values(vs_plain, plain);
      report.add(std::move(vs_plain));

      const double log_ratio = ratio_of(logd);
      Row vs_log{"entropic",   what + " vs numpy log-domain",
                 ours_text,    numpy_text("numpy log", logd),
                 log_ratio,    ">= 10x faster",
                 Verdict::met, {}};
      // A numpy run stopped by its time budget gives a lower bound on the ratio.
      if (!(log_ratio >= 10) || !ours.converged()) vs_log.verdict = Verdict::missed;
      if (!logd.flag("converged") && log_ratio > 0) vs_log.reference += ", ratio is a lower bound";
      add_values(vs_log, logd);
      report.add(std::move(vs_log));
    }
    if (kind == GainKind::geometric) {
      for (double factor : {0.01, 0.001}) {
        EntropicOptions o;
        o.epsilon = factor * range;
        o.tolerance = kSmallTolerance;
        EntropicResult r;
        const double s = best_time(settings.repeats, [&] { r = solve_entropic(p, o); });
        small_eps_seconds.push_back(s);
        Row row{"entropic",
                "geometric, eps=" + format_number(factor) + " range, " + size + ", tol 1e-9",
                solve_text(s, r.iterations) + ", violation " + format_number(r.marginal_error, 2) +
                    (r.converged() ? "" : " (" + to_string(r.status) + ")"),
                "",
                0,
                "",
                r.converged() ? Verdict::info : Verdict::missed,
                {}};
        if (factor == 0.001) {
          row.reference = "eps=0.01: " + format_seconds(small_eps_seconds[0]);
          row.ratio = s / small_eps_seconds[0];
          row.target = "converges, <= 10x the time at 0.01";
          row.verdict = r.converged() && row.ratio <= 10 ? Verdict::met : Verdict::missed;
        }
        row.values.add("epsilon_share_of_range", factor)
            .add("seconds", s)
            .add("iterations", static_cast<long long>(r.iterations))
            .add("stages", static_cast<long long>(r.stages))
            .add("log_domain_updates", static_cast<long long>(r.log_domain_updates))
            .add("marginal_error", r.marginal_error)
            .add("converged", r.converged());
        report.add(std::move(row));
      }
    }
  }
}

}  // namespace allocsim::bench
