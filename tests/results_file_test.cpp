// The results layer: what RunWriter and AllocationRecorder write is what
// ResultsReader and read_run_records read back; files appear only when
// complete; foreign and newer files are refused; the run store merges parts.
#include <H5Cpp.h>

#include <catch2/catch.hpp>
#include <cstdio>
#include <filesystem>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"
#include "allocsim/results/run_records.hpp"
#include "allocsim/results/run_store.hpp"
#include "test_files.hpp"

using namespace allocsim;
namespace fs = std::filesystem;

namespace {

TransportProblem small_problem() {
  TransportProblem p;
  p.gains.resize(3, 4);
  p.gains << 1, 2, 3, 4, 2, 1, 0, 3, 5, 1, 2, 2;
  p.budgets = Vector::Constant(3, 4.0);
  p.capacities = Vector::Constant(4, 3.0);
  AccessMask access = AccessMask::Ones(3, 4);
  access(0, 3) = 0;
  p.access = access;
  return p;
}

// Counts drawn from the entropic coupling at epsilon 0.7, scaled to 1200 units.
Matrix counts_of(const TransportProblem& p) {
  EntropicOptions options;
  options.epsilon = 0.7;
  const Matrix coupling = solve_entropic(p, options).coupling;
  return (coupling * (1200.0 / coupling.sum())).array().round().matrix();
}

void remove_file(const std::string& path) { std::remove(path.c_str()); }

}  // namespace

TEST_CASE("a run written with RunWriter reads back unchanged") {
  const std::string path = "results_file_test_roundtrip.h5";
  const TransportProblem p = small_problem();
  const Matrix counts = counts_of(p);
  const AllocationReport report =
      analyze_allocation({counts, p.gains, p.access, {"counts", "gains", "access"}}, {});
  {
    ResultsFile file(path, "[scenario]\nagents = 3\n", "test");
    RunWriter run = file.create_run(run_name(0));
    run.set_text(layout::kStatus, layout::kStatusComplete);
    run.set_integer(layout::kSeed, 42);
    run.set_number("dynamics.temperature", 0.7);
    run.write_scenario(p);
    run.write_labels({"a", "b", "c"}, {"w", "x", "y", "z"});
    AllocationRecorder recorder = run.record_allocation(3, 4);
    RunResult result;
    result.total = counts;
    const Vector prices = Vector::LinSpaced(4, 0, 1);
    recorder.add_snapshot(counts, 10, &prices);
    recorder.add_snapshot(2 * counts, 20, &prices);
    recorder.finish(result);
    run.write_report(report);
    file.write_summary({{{"units", {counts.sum()}}}, {{layout::kRunColumn, {run_name(0)}}}});
    file.commit();
  }
  const ResultsReader reader(path);
  REQUIRE(reader.runs() == std::vector<std::string>{"run-000000"});
  const TransportProblem back = reader.read_scenario("run-000000");
  CHECK(back.gains == p.gains);
  CHECK(back.budgets == p.budgets);
  REQUIRE(back.access);
  CHECK(*back.access == *p.access);
  CHECK(reader.read_texts("run-000000", layout::kAgentLabels) ==
        std::vector<std::string>{"a", "b", "c"});
  CHECK(reader.read_texts("run-000000", layout::kPartnerLabels).size() == 4);
  CHECK(reader.snapshot_count("run-000000") == 2);
  CHECK(reader.read_snapshot("run-000000", 1) == 2 * counts);
  CHECK(reader.read_matrix("run-000000", layout::kTotal) == counts);
  CHECK(reader.read_matrix("run-000000", layout::kPrices).rows() == 2);
  CHECK(reader.read_vector("run-000000", layout::kRoundEnd)(1) == 20);
  const auto analysis = reader.group_attributes("run-000000", layout::kAnalysis);
  REQUIRE(attribute_number(analysis, layout::kEpsilon));
  CHECK(*attribute_number(analysis, layout::kEpsilon) == report.temperature.epsilon);
  CHECK(reader.has("run-000000", layout::kEntropicCoupling));

  const std::vector<RunRecord> records = read_run_records(reader);
  REQUIRE(records.size() == 1);
  CHECK(records[0].number(layout::kSeed) == 42.0);
  CHECK(records[0].number("dynamics.temperature") == 0.7);
  CHECK(records[0].number(layout::kNodf) == report.structure.nodf.total);
  CHECK(records[0].number("units") == counts.sum());  // from /summary
  CHECK(records[0].text(layout::kStatus) == std::string(layout::kStatusComplete));
  remove_file(path);
}

TEST_CASE("a results file appears only when committed") {
  const std::string path = "results_file_test_uncommitted.h5";
  remove_file(path);
  std::string temporary;
  {
    ResultsFile file(path, "", "test");
    temporary = file.temporary_path();
    file.create_run(run_name(0)).set_integer(layout::kSeed, 1);
    CHECK(fs::exists(temporary));
  }
  CHECK_FALSE(fs::exists(path));
  CHECK_FALSE(fs::exists(temporary));
}

TEST_CASE("files that are not allocsim results, or are of a newer version, are refused") {
  const std::string text = testing::write_test_file("results_file_test_text.h5", "not hdf5\n");
  CHECK_THROWS_AS(ResultsReader(text), InputError);
  CHECK_THROWS_WITH(ResultsReader("results_file_test_missing.h5"),
                    Catch::Contains("results_file_test_missing.h5"));

  const std::string foreign = "results_file_test_foreign.h5";
  H5::H5File(foreign, H5F_ACC_TRUNC).close();
  CHECK_THROWS_WITH(ResultsReader(foreign), Catch::Contains("not an allocsim results file"));

  const std::string newer = "results_file_test_newer.h5";
  {
    ResultsFile file(newer, "", "test");
    file.commit();
  }
  {
    H5::H5File file(newer, H5F_ACC_RDWR);
    H5::Attribute version = file.openAttribute(layout::kFormatVersion);
    const long long future = layout::kResultsFormatVersion + 98;
    version.write(H5::PredType::NATIVE_LLONG, &future);
  }
  CHECK_THROWS_WITH(ResultsReader(newer), Catch::Contains("newer than this allocsim reads"));
  for (const auto& f : {text, foreign, newer}) remove_file(f);
}

TEST_CASE("the run store merges complete parts into one file with a summary row per run") {
  const std::string path = "results_file_test_sweep.h5";
  fs::remove_all(path + ".parts");
  remove_file(path);
  RunStore store(path);
  store.open("[sweep]\nexperiment one\n", false);
  for (long k = 0; k < 3; ++k) {
    ResultsFile part(store.part_path(k), "experiment one", "test");
    RunWriter run = part.create_run(run_name(k));
    run.set_text(layout::kStatus, layout::kStatusComplete);
    run.set_number("dynamics.temperature", 0.1 * (k + 1));
    run.set_integer(layout::kSeed, 7);
    if (k < 2) part.commit();  // the third part is lost, as in a crash
  }
  CHECK(store.finished() == std::set<long>{0, 1});
  CHECK_THROWS_AS(RunStore(path).open("another experiment\n", false), InputError);
  {
    ResultsFile part(store.part_path(2), "experiment one", "test");
    part.create_run(run_name(2)).set_number("dynamics.temperature", 0.3);
    part.commit();
  }
  const SummaryTable table = store.merge(3, "experiment one", "test", {"dynamics.temperature"});
  CHECK_FALSE(fs::exists(path + ".parts"));
  const ResultsReader reader(path);
  CHECK(reader.runs().size() == 3);
  const auto numbers = reader.summary_numbers();
  const auto column = std::find_if(numbers.begin(), numbers.end(),
                                   [](const auto& c) { return c.first == "dynamics.temperature"; });
  REQUIRE(column != numbers.end());
  CHECK(column->second[0] == 0.1);
  CHECK(column->second[2] == 0.3);
  CHECK(table.texts.front().second.size() == 3);
  remove_file(path);
}
