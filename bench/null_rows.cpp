// Null ensembles: whole-process `allocsim analyze` with 200 null samples on
// a 200 x 1000 count matrix, against an independent numpy NODF (BLAS
// products) looped over as many matrices (the metric only, no sampling),
// and a 200 x 5000 matrix with 1000 samples.
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <random>

#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/analysis/null_models.hpp"
#include "allocsim/core/csv.hpp"
#include "bench.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

// Counts with a nested tendency: Poisson with mean 0.8 a_i b_j (a, b
// uniform), about half the cells non-zero; gains uniform plus a little of
// the counts' logarithm.
struct CountInstance {
  Matrix counts, gains;
};

CountInstance make_counts(long n, long m, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> agent(0.2, 3.0), partner(0.05, 1.5), unit(0.0, 1.0);
  Vector a(n), b(m);
  for (long i = 0; i < n; ++i) a[i] = agent(rng);
  for (long j = 0; j < m; ++j) b[j] = partner(rng);
  CountInstance out{Matrix(n, m), Matrix(n, m)};
  for (long i = 0; i < n; ++i)
    for (long j = 0; j < m; ++j) {
      out.counts(i, j) = std::poisson_distribution<int>(0.8 * a[i] * b[j])(rng);
      out.gains(i, j) = unit(rng) + 0.3 * std::log1p(out.counts(i, j));
    }
  return out;
}

void write_raw(const std::string& path, const Matrix& values) {
  std::ofstream out(path, std::ios::binary);
  out.write(reinterpret_cast<const char*>(values.data()),
            static_cast<std::streamsize>(values.size() * 8));
}

// Seconds of `allocsim analyze` on the instance, or -1 when it fails.
double analyze_seconds(const std::string& folder, const std::string& nulls, long samples) {
  if (access(ALLOCSIM_BENCH_PROGRAM, X_OK) != 0) return -1;
  std::string command = std::string("'") + ALLOCSIM_BENCH_PROGRAM + "' analyze --allocation '" +
                        folder + "/counts.csv' --gains '" + folder + "/gains.csv' --json";
  if (!nulls.empty()) command += " --nulls " + nulls + " --null-samples " + std::to_string(samples);
  command += " > '" + folder + "/analyze.json' 2> /dev/null";
  const auto start = Clock::now();
  const int status = std::system(command.c_str());
  const double seconds = seconds_since(start);
  return status == 0 ? seconds : -1;
}

std::string size_text(long n, long m) { return std::to_string(n) + "x" + std::to_string(m); }

}  // namespace

void null_rows(const Settings& settings, Report& report) {
  const long n = 200, m = settings.quick ? 300 : 1000, samples = settings.quick ? 40 : 200;
  const std::string folder = settings.workdir + "/nulls";
  std::system(("mkdir -p '" + folder + "'").c_str());
  const CountInstance instance = make_counts(n, m, 31);
  write_matrix_csv(folder + "/counts.csv", instance.counts);
  write_matrix_csv(folder + "/gains.csv", instance.gains);
  write_raw(folder + "/counts.bin", instance.counts);

  const PythonAnswer numpy =
      run_python({"nodf", folder, std::to_string(n), std::to_string(m), std::to_string(samples)});
  const double numpy_seconds = numpy.ok() ? numpy.number("seconds") : 0;
  const double ours_nodf = nodf(binarize(instance.counts)).total;
  const bool agree = numpy.ok() && std::abs(numpy.number("nodf") - ours_nodf) < 1e-9;
  const std::string numpy_text = numpy.ok() ? "numpy NODF x" + std::to_string(samples) + " " +
                                                  format_seconds(numpy_seconds) +
                                                  (agree ? "" : " (VALUES DIFFER)")
                                            : "numpy did not run";
  const double base = analyze_seconds(folder, "", 0);
  {
    Row row{"nulls",
            "analyze " + size_text(n, m) + " without nulls (temperature, exact, structure)",
            format_seconds(base),
            "",
            0,
            "",
            Verdict::info,
            {}};
    row.values.add("seconds", base);
    report.add(std::move(row));
  }
  for (const auto& [model, target] :
       {std::pair<std::string, double>{"curveball", 30}, {"bicm", 30}, {"fixed-margins", 10}}) {
    const double whole = analyze_seconds(folder, model, samples);
    // The ensemble alone, in this process (all threads).
    NullOptions o;
    o.model = null_model_from_string(model);
    o.samples = samples;
    std::vector<MetricFunction> metrics = {[](const Matrix& x) { return nodf(binarize(x)).total; }};
    if (model == "fixed-margins") metrics.push_back([](const Matrix& x) { return wnodf(x).total; });
    const Matrix observed =
        model == "fixed-margins" ? instance.counts : to_matrix(binarize(instance.counts));
    const double ensemble = best_time(1, [&] { compare_metrics_with_null(metrics, observed, o); });
    const double ratio = whole > 0 && numpy_seconds > 0 ? numpy_seconds / whole : 0;
    const std::string metric = model == "fixed-margins" ? "NODF+WNODF" : "NODF";
    Row row{"nulls",
            "analyze " + size_text(n, m) + ", " + std::to_string(samples) + " " + model +
                " samples, " + metric + " (whole process)",
            format_seconds(whole) + " (ensemble alone " + format_seconds(ensemble) + ")",
            numpy_text,
            ratio,
            ">= " + format_number(target) + "x the numpy loop",
            ratio >= target && agree ? Verdict::met : Verdict::missed,
            {}};
    row.values.add("model", model)
        .add("samples", static_cast<long long>(samples))
        .add("analyze_seconds", whole)
        .add("analyze_without_nulls_seconds", base)
        .add("ensemble_seconds", ensemble)
        .add("numpy_seconds", numpy_seconds)
        .add("numpy_nodf", numpy.number("nodf"))
        .add("nodf", ours_nodf)
        .add("ratio_ensemble_alone", numpy_seconds > 0 ? numpy_seconds / ensemble : 0.0);
    report.add(std::move(row));
  }
  if (!settings.quick) {
    const long wide = 5000, many = 1000;
    const std::string big = settings.workdir + "/nulls-wide";
    std::system(("mkdir -p '" + big + "'").c_str());
    const CountInstance w = make_counts(n, wide, 32);
    write_matrix_csv(big + "/counts.csv", w.counts);
    write_matrix_csv(big + "/gains.csv", w.gains);
    const double base_wide = analyze_seconds(big, "", 0);
    const double whole = analyze_seconds(big, "curveball", many);
    Row row{"nulls",
            "analyze " + size_text(n, wide) + ", " + std::to_string(many) +
                " curveball samples, NODF (whole process)",
            format_seconds(whole),
            "without nulls " + format_seconds(base_wide),
            0,
            "report the time",
            whole > 0 ? Verdict::info : Verdict::missed,
            {}};
    row.values.add("analyze_seconds", whole)
        .add("analyze_without_nulls_seconds", base_wide)
        .add("samples", static_cast<long long>(many));
    report.add(std::move(row));
  }
}

}  // namespace allocsim::bench
