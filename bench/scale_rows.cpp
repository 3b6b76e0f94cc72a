// Scale: exact and entropic transport at n = m = 3000, each in a child
// process (this program re-executed) so that its peak resident memory can
// be read and set against the n*m*8 bytes of one dense matrix.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <fstream>
#include <string>
#include <thread>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

struct ChildRun {
  double solve_seconds = -1;
  long peak_bytes = -1;
  std::string status;
};

ChildRun run_child(const Settings& settings, const std::string& kind, long n) {
  const std::string file = settings.workdir + "/scale-" + kind + ".txt";
  const std::string size = std::to_string(n);
  const pid_t pid = fork();
  if (pid == 0) {
    execl(settings.self.c_str(), settings.self.c_str(), "--scale-child", kind.c_str(), size.c_str(),
          file.c_str(), static_cast<char*>(nullptr));
    _exit(127);
  }
  ChildRun run;
  int status = 0;
  struct rusage usage {};
  if (pid < 0 || wait4(pid, &status, 0, &usage) != pid || !WIFEXITED(status) ||
      WEXITSTATUS(status) != 0)
    return run;
  run.peak_bytes = usage.ru_maxrss * 1024L;  // Linux reports kilobytes
  std::ifstream in(file);
  in >> run.solve_seconds >> run.status;
  std::remove(file.c_str());
  return run;
}

}  // namespace

int scale_child(const std::string& kind, long n, const std::string& file) {
  const TransportProblem p = make_instance(n, n, GainKind::geometric, 41);
  double seconds = 0;
  std::string status;
  if (kind == "exact") {
    const ExactResult r = solve_exact(p);
    seconds = r.seconds;
    status = to_string(r.status);
  } else {
    EntropicOptions o;
    o.epsilon = 0.01 * gain_range(p);
    o.tolerance = 1e-6;
    o.threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
    const EntropicResult r = solve_entropic(p, o);
    seconds = r.seconds;
    status = to_string(r.status) + "," + std::to_string(r.iterations) + "it";
  }
  std::ofstream(file) << seconds << " " << status << "\n";
  return 0;
}

void scale_rows(const Settings& settings, Report& report) {
  const long n = settings.quick ? 1000 : 3000;
  const double matrix = static_cast<double>(n) * n * 8;
  for (const std::string kind : {"exact", "entropic"}) {
    const ChildRun run = run_child(settings, kind, n);
    const double share = run.peak_bytes / matrix;
    const std::string what = kind + (kind == "exact" ? " (LEMON network simplex)"
                                                     : ", eps=0.01 range, tol 1e-6, all threads");
    Row row{"scale",
            what + ", geometric, n=m=" + std::to_string(n) + ", peak memory",
            format_seconds(run.solve_seconds) + " (" + run.status + "), " +
                format_number(run.peak_bytes / 1e6) + " MB",
            "n*m*8 = " + format_number(matrix / 1e6) + " MB",
            share,
            "O(n*m): report the multiple",
            run.peak_bytes > 0 ? Verdict::info : Verdict::missed,
            {}};
    row.values.add("n", static_cast<long long>(n))
        .add("solve_seconds", run.solve_seconds)
        .add("peak_bytes", static_cast<long long>(run.peak_bytes))
        .add("n_m_8_bytes", matrix)
        .add("status", run.status);
    report.add(std::move(row));
  }
}

}  // namespace allocsim::bench
