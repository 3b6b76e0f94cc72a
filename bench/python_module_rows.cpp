// The Python module against the C++ library: the per-call overhead of
// allocsim.solve_entropic on a small problem, and allocsim.estimate_temperature
// over many small cases against a numpy log-domain implementation of the
// same estimator (bench/python_module.py).
#include <cmath>

#include "allocsim/analysis/entropic_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

constexpr double kOverheadTarget = 20e-6;  // seconds above the C++ call
constexpr double kSpeedupTarget = 20;      // numpy time / ours

}  // namespace

void python_module_rows(const Settings& settings, Report& report) {
  const std::string script = ALLOCSIM_BENCH_MODULE_SCRIPT;
  const long n = 10, calls = settings.quick ? 2000 : 20000;
  const TransportProblem p = make_instance(n, n, GainKind::random, 11);
  write_instance(p, settings.workdir);
  EntropicOptions o;
  o.epsilon = 0.1 * gain_range(p);
  const double cpp = best_time(3,
                               [&] {
                                 for (long k = 0; k < calls; ++k) solve_entropic(p, o);
                               }) /
                     static_cast<double>(calls);
  const PythonAnswer a =
      run_python({"overhead", settings.workdir, std::to_string(n), std::to_string(n),
                  format_number(o.epsilon, 17), std::to_string(calls)},
                 script, ALLOCSIM_BENCH_MODULE_PATH);
  Row overhead;
  overhead.group = "python";
  overhead.name = "allocsim.solve_entropic per call, n=m=10, eps=0.1 range vs the C++ call";
  if (a.ok()) {
    const double python = a.number("seconds_per_call");
    overhead.ours = format_seconds(python) + " (" + format_seconds(python - cpp) + " above)";
    overhead.ratio = python / cpp;
    overhead.verdict = python - cpp <= kOverheadTarget ? Verdict::met : Verdict::missed;
    overhead.values.add("python_seconds", python).add("cpp_seconds", cpp);
  } else {
    overhead.ours = "the module did not run (built? " + a.text().substr(0, 60) + ")";
    overhead.verdict = Verdict::missed;
  }
  overhead.reference = "C++ " + format_seconds(cpp);
  overhead.target = "<= 20 us above the C++ call";
  report.add(overhead);

  const long cases = settings.quick ? 10 : 100;
  const PythonAnswer t = run_python(
      {"temperature", std::to_string(cases), "30", format_number(settings.python_budget * 4, 6)},
      script, ALLOCSIM_BENCH_MODULE_PATH);
  Row speed;
  speed.group = "python";
  speed.name = "allocsim.estimate_temperature, " + std::to_string(cases) +
               " cases of 30x30 vs numpy log-domain estimator";
  if (t.ok()) {
    const double ours = t.number("ours_seconds");
    const double done = t.number("numpy_cases");
    const double numpy = done > 0 ? t.number("numpy_seconds") * cases / done : NAN;
    speed.ours = format_seconds(ours);
    speed.reference =
        "numpy " + format_seconds(numpy) +
        (done < cases ? " (extrapolated from " + format_number(done) + " cases)" : "") +
        ", max rel. difference " + format_number(t.number("max_relative_difference"), 2);
    speed.ratio = numpy / ours;
    speed.verdict = speed.ratio >= kSpeedupTarget ? Verdict::met : Verdict::missed;
    speed.values.add("ours_seconds", ours).add("numpy_seconds", numpy);
  } else {
    speed.ours = "the module did not run";
    speed.verdict = Verdict::missed;
  }
  speed.target = ">= 20x faster";
  report.add(speed);
}

}  // namespace allocsim::bench
