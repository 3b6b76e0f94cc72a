// Figures: escaping of text, valid images, deterministic scripts, no
// command injection through labels, and nothing left behind on failure.
#include <unistd.h>
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "allocsim/core/error.hpp"
#include "allocsim/plots/figures.hpp"

namespace fs = std::filesystem;
using namespace allocsim;
using namespace allocsim::plots;

namespace {

// A fresh folder under the system temporary folder, removed at the end.
struct TemporaryFolder {
  fs::path path;
  explicit TemporaryFolder(const std::string& name) {
    path =
        fs::temp_directory_path() / ("allocsim-figures-" + name + "-" + std::to_string(::getpid()));
    fs::remove_all(path);
    fs::create_directories(path);
  }
  ~TemporaryFolder() { fs::remove_all(path); }
  std::string stem(const std::string& name) const { return (path / name).string(); }
};

// Runs the scope with `folder` as the working directory (where a shell
// command injected through a label would leave its file).
struct WorkingDirectory {
  fs::path previous = fs::current_path();
  explicit WorkingDirectory(const fs::path& folder) { fs::current_path(folder); }
  ~WorkingDirectory() { fs::current_path(previous); }
};

struct PngSize {
  bool valid = false;
  unsigned width = 0, height = 0;
};

// PNG signature and the IHDR chunk (PNG specification, section 5.2 and 11.2.2).
PngSize read_png_size(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  unsigned char head[24] = {};
  if (!in.read(reinterpret_cast<char*>(head), sizeof head)) return {};
  const unsigned char signature[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
  if (!std::equal(signature, signature + 8, head) || std::string(head + 12, head + 16) != "IHDR")
    return {};
  auto big_endian = [&](int at) {
    return (unsigned(head[at]) << 24) | (unsigned(head[at + 1]) << 16) |
           (unsigned(head[at + 2]) << 8) | head[at + 3];
  };
  return {true, big_endian(16), big_endian(20)};
}

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

Matrix nested_matrix(long n, long m) {
  Matrix values = Matrix::Zero(n, m);
  for (long i = 0; i < n; ++i) {
    for (long j = 0; j < m - i * m / n; ++j) values(i, j) = 1.0 + i + 2.0 * j;
  }
  return values;
}

AllocationHeatmaps sample_heatmaps() {
  AllocationHeatmaps figure;
  figure.title = "allocations of a 12 x 9 market";
  Matrix dense(12, 9);
  for (long i = 0; i < 12; ++i) {
    for (long j = 0; j < 9; ++j) dense(i, j) = std::exp(-0.3 * std::abs(double(i) - j));
  }
  Matrix sparse = Matrix::Zero(12, 9);
  for (long i = 0; i < 12; ++i) sparse(i, i * 9 / 12) = 1;
  figure.panels = {{"emergent", nested_matrix(12, 9)}, {"entropic", dense}, {"exact", sparse}};
  return figure;
}

std::vector<Point> sample_points() {
  std::vector<Point> points;
  for (const double t : {0.01, 0.03, 0.1, 0.3, 1.0}) {
    for (const double r : {0.9, 1.1}) points.push_back({t, t * r, t * r * 0.8, t * r * 1.25});
  }
  return points;
}

MetricAgainstTemperature sample_metric() {
  MetricAgainstTemperature figure;
  figure.title = "nestedness rises with noise";
  figure.metric_name = "NODF";
  for (const auto& p : sample_points()) {
    figure.runs.push_back({p.x, 40 + 10 * std::log10(p.x) + p.y});
    figure.null_band.push_back({p.x, 30, 25, 35});
  }
  return figure;
}

Trajectories sample_trajectories() {
  Trajectories figure;
  figure.title = "price rule, one run";
  for (int k = 1; k <= 50; ++k) {
    figure.rounds.push_back(10.0 * k);
    figure.column_error.push_back(1.0 / k);
    figure.row_error.push_back(0.1 / (k * k));
  }
  for (int j = 0; j < 5; ++j) {
    std::vector<double> prices;
    for (int k = 1; k <= 50; ++k) prices.push_back(j * (1 - std::exp(-k / 10.0)));
    figure.prices.push_back(prices);
  }
  return figure;
}

EstimatorScoreCard sample_score_card() {
  EstimatorScoreCard figure;
  figure.title = "estimator on a benchmark set";
  for (int k = 0; k < 40; ++k) {
    const double truth = 0.01 * std::pow(100.0, k / 39.0);
    const double estimate = k == 7 ? INFINITY : truth * (1 + 0.05 * std::sin(k));
    figure.cases.push_back({truth, estimate, 200.0 * (1 + k), k % 2 ? "model" : "queue"});
  }
  for (const std::string axis : {"true epsilon", "units"})
    for (int band = 1; band <= 5; ++band)
      figure.bands.push_back({axis, band, 0.9 + 0.01 * band, 8});
  return figure;
}

// Draws every figure with `options` and `text` in each text field.
std::vector<std::string> draw_all(const TemporaryFolder& folder, const FigureOptions& options,
                                  const std::string& text = "") {
  AllocationHeatmaps heatmaps = sample_heatmaps();
  MetricAgainstTemperature metric = sample_metric();
  TemperatureRecovery recovery{"temperature recovered", sample_points()};
  DistanceAgainstTemperature distance{"distance to couplings", "KL divergence", sample_points(),
                                      sample_points()};
  for (auto& p : distance.to_exact) p.y *= 10;
  Trajectories trajectories = sample_trajectories();
  EstimatorScoreCard scores = sample_score_card();
  if (!text.empty()) {
    heatmaps.title = heatmaps.panels[0].title = text;
    heatmaps.row_labels.assign(12, text);
    heatmaps.column_labels.assign(9, text);
    metric.title = metric.metric_name = metric.null_name = text;
    recovery.title = recovery.interval_name = text;
    distance.title = distance.distance_name = text;
    trajectories.title = text;
    trajectories.prices.resize(3);
    trajectories.partner_labels.assign(3, text);
    scores.title = scores.cases[0].series = scores.bands[0].axis = text;
  }
  return {draw_allocation_heatmaps(heatmaps, folder.stem("heatmaps"), options),
          draw_metric_against_temperature(metric, folder.stem("metric"), options),
          draw_temperature_recovery(recovery, folder.stem("recovery"), options),
          draw_distance_against_temperature(distance, folder.stem("distance"), options),
          draw_trajectories(trajectories, folder.stem("trajectories"), options),
          draw_estimator_score_card(scores, folder.stem("scores"), options)};
}

const std::vector<std::string> kHostileLabels = {
    "\"; system \"touch PWNED\"; \"",
    "'; system 'touch PWNED'; '",
    "\"; print system(\"touch PWNED\"); \"",
    "'",
    "`touch PWNED`",
    "x\nsystem('touch PWNED')\n",
    "a_b^c @d &e ~f {g} \\h\\",
};

}  // namespace

TEST_CASE("escape_gnuplot_text doubles quotes and escapes enhanced-text specials", "[figures]") {
  CHECK(escape_gnuplot_text("plain text 1.5") == "plain text 1.5");
  CHECK(escape_gnuplot_text("it's") == "it''s");
  CHECK(escape_gnuplot_text("a_b^c") == "a\\_b\\^c");
  CHECK(escape_gnuplot_text("@&~{}") == "\\@\\&\\~\\{\\}");
  CHECK(escape_gnuplot_text("back\\slash") == "back\\\\slash");
  CHECK(escape_gnuplot_text("`touch x`") == "`touch x`");  // inert inside single quotes
  CHECK(escape_gnuplot_text("\"q\"") == "\"q\"");
  CHECK(escape_gnuplot_text("ε and λ") == "ε and λ");  // UTF-8 passes through
  CHECK(quote_gnuplot_text("x'") == "'x'''");
  CHECK(escape_gnuplot_text("'quoted'") == "&{}''quoted''");  // a leading '' would end the string
}

TEST_CASE("escaped text has no line break and no unpaired single quote", "[figures]") {
  for (const auto& label : kHostileLabels) {
    const std::string escaped = escape_gnuplot_text(label);
    CHECK(escaped.find('\n') == std::string::npos);
    CHECK(escaped.find('\r') == std::string::npos);
    std::size_t run = 0;  // every run of single quotes has even length
    for (const char c : escaped + "x") {
      if (c == '\'') {
        ++run;
      } else {
        CHECK(run % 2 == 0);
        run = 0;
      }
    }
  }
}

TEST_CASE("image formats read and write as words", "[figures]") {
  for (const ImageFormat f : {ImageFormat::png, ImageFormat::svg, ImageFormat::pdf}) {
    CHECK(image_format_from_string(to_string(f)) == f);
  }
  CHECK_THROWS_AS(image_format_from_string("jpeg"), InputError);
}

TEST_CASE("figure options name the wrong field", "[figures]") {
  FigureOptions options;
  CHECK_NOTHROW(options.validate());
  options.font_size_points = 2;
  CHECK_THROWS_WITH(options.validate(), Catch::Contains("font_size_points"));
  options = {};
  options.width_pixels = 50;
  CHECK_THROWS_WITH(options.validate(), Catch::Contains("width_pixels"));
}

TEST_CASE("degree ordering puts a shuffled nested matrix back into a staircase", "[figures]") {
  const Matrix nested = nested_matrix(6, 5);
  const std::vector<long> row_shuffle = {3, 0, 5, 1, 4, 2}, column_shuffle = {2, 4, 0, 3, 1};
  Matrix shuffled(6, 5);
  for (long i = 0; i < 6; ++i) {
    for (long j = 0; j < 5; ++j) shuffled(i, j) = nested(row_shuffle[i], column_shuffle[j]);
  }
  const Ordering order = degree_ordering(shuffled);
  Matrix restored(6, 5);
  for (long i = 0; i < 6; ++i) {
    for (long j = 0; j < 5; ++j) restored(i, j) = shuffled(order.rows[i], order.columns[j]);
  }
  CHECK(((restored.array() > 0) == (nested.array() > 0)).all());
}

TEST_CASE("every figure writes a valid PNG of the default size", "[figures]") {
  TemporaryFolder folder("png");
  const std::vector<std::string> written = draw_all(folder, {});
  const std::vector<std::pair<unsigned, unsigned>> sizes = {{1360, 640}, {1000, 700}, {900, 800},
                                                            {1000, 700}, {1000, 800}, {1400, 1100}};
  REQUIRE(written.size() == sizes.size());
  for (std::size_t k = 0; k < written.size(); ++k) {
    INFO(written[k]);
    CHECK(fs::path(written[k]).extension() == ".png");
    CHECK(fs::file_size(written[k]) > 5000);
    const PngSize png = read_png_size(written[k]);
    CHECK(png.valid);
    CHECK(png.width == sizes[k].first);
    CHECK(png.height == sizes[k].second);
  }
  // Nothing else is left in the folder: no script, no temporary image.
  CHECK(std::distance(fs::directory_iterator(folder.path), fs::directory_iterator()) == 6);
}

TEST_CASE("a chosen size and the SVG and PDF terminals are honoured", "[figures]") {
  TemporaryFolder folder("formats");
  FigureOptions options;
  options.width_pixels = 640;
  options.height_pixels = 480;
  const std::string png =
      draw_temperature_recovery({"t", sample_points()}, folder.stem("small"), options);
  const PngSize size = read_png_size(png);
  CHECK((size.valid && size.width == 640 && size.height == 480));
  options.format = ImageFormat::svg;
  const std::string svg =
      draw_metric_against_temperature(sample_metric(), folder.stem("metric"), options);
  CHECK(fs::path(svg).extension() == ".svg");
  CHECK(read_text(svg).find("<svg") != std::string::npos);
  options.format = ImageFormat::pdf;
  const std::string pdf =
      draw_allocation_heatmaps(sample_heatmaps(), folder.stem("heatmaps"), options);
  CHECK(read_text(pdf).rfind("%PDF-", 0) == 0);
}

TEST_CASE("the script for fixed data is the same at every generation", "[figures]") {
  TemporaryFolder folder("script");
  FigureOptions options;
  options.script_only = true;
  const std::vector<std::string> first = draw_all(folder, options);
  std::vector<std::string> first_text;
  for (const auto& path : first) {
    CHECK(fs::path(path).extension() == ".gp");
    first_text.push_back(read_text(path));
    CHECK(first_text.back().find("tmp-") == std::string::npos);  // no process-specific names
  }
  const std::vector<std::string> second = draw_all(folder, options);
  REQUIRE(second == first);
  for (std::size_t k = 0; k < second.size(); ++k) CHECK(read_text(second[k]) == first_text[k]);
  // The script draws to the final image name and holds the data inline.
  CHECK(first_text[0].find("set output '" + folder.stem("heatmaps") + ".png'") !=
        std::string::npos);
  CHECK(first_text[0].find("\ne\n") != std::string::npos);
  // Different data give a different script.
  MetricAgainstTemperature other = sample_metric();
  other.runs[0].y += 1;
  draw_metric_against_temperature(other, folder.stem("metric"), options);
  CHECK(read_text(folder.stem("metric") + ".gp") != first_text[1]);
}

TEST_CASE("the injection check detects a command that gnuplot runs", "[figures]") {
  // Control: the same payload written unescaped does run, so the next test
  // would see it if escaping failed.
  TemporaryFolder folder("control");
  WorkingDirectory cwd(folder.path);
  std::ofstream("control.gp") << "set title \"" << kHostileLabels[0] << "\"\n";
  std::system("gnuplot control.gp 2>/dev/null");  // fails on the stray "" after the command ran
  CHECK(fs::exists(folder.path / "PWNED"));
}

TEST_CASE("labels with gnuplot command syntax are drawn as text and run nothing", "[figures]") {
  for (const auto& label : kHostileLabels) {
    INFO("label: " << label);
    TemporaryFolder folder("hostile");
    WorkingDirectory cwd(folder.path);
    const std::vector<std::string> written = draw_all(folder, {}, label);
    for (const auto& path : written) CHECK(read_png_size(path).valid);
    CHECK_FALSE(fs::exists(folder.path / "PWNED"));
    FigureOptions script_only;
    script_only.script_only = true;
    const std::vector<std::string> scripts = draw_all(folder, script_only, label);
    for (const auto& path : scripts) {
      INFO(path);
      // The label appears only as a quoted string literal.
      CHECK(read_text(path).find(quote_gnuplot_text(label)) != std::string::npos);
    }
    CHECK_FALSE(fs::exists(folder.path / "PWNED"));
  }
}

TEST_CASE("a failing gnuplot leaves no file behind and says so", "[figures]") {
  TemporaryFolder folder("failure");
  FigureOptions options;
  options.gnuplot_program = "false";
  CHECK_THROWS_WITH(
      draw_metric_against_temperature(sample_metric(), folder.stem("metric"), options),
      Catch::Contains("gnuplot failed"));
  options.gnuplot_program = "/no/such/gnuplot";
  CHECK_THROWS_WITH(
      draw_metric_against_temperature(sample_metric(), folder.stem("metric"), options),
      Catch::Contains("could not be run"));
  CHECK(fs::directory_iterator(folder.path) == fs::directory_iterator());
}

TEST_CASE("unusable figure data is refused with a reason", "[figures]") {
  TemporaryFolder folder("refused");
  AllocationHeatmaps heatmaps = sample_heatmaps();
  heatmaps.panels[1].values = Matrix::Ones(3, 3);
  CHECK_THROWS_WITH(draw_allocation_heatmaps(heatmaps, folder.stem("h")),
                    Catch::Contains("expected 12x9"));
  heatmaps = sample_heatmaps();
  heatmaps.ordering.rows = {0, 0, 1};
  heatmaps.ordering.columns = {0};
  CHECK_THROWS_WITH(draw_allocation_heatmaps(heatmaps, folder.stem("h")),
                    Catch::Contains("permutation"));
  CHECK_THROWS_AS(draw_temperature_recovery({"t", {{1, 0}, {2, kNoValue}}}, folder.stem("r")),
                  InputError);
  CHECK_THROWS_AS(draw_metric_against_temperature({}, folder.stem("m")), InputError);
  CHECK_THROWS_WITH(
      draw_estimator_score_card({"s", {{0.1, kNoValue, 100, "a"}}, {}}, folder.stem("s")),
      Catch::Contains("no answered case"));
  CHECK(fs::directory_iterator(folder.path) == fs::directory_iterator());
}

namespace {

// The figures against temperature with `count` levels of a factor (series,
// or panels), named `text` when given; level k's values are shifted by k.
std::vector<std::string> draw_by_level(const TemporaryFolder& folder, const FigureOptions& options,
                                       int count, bool panels, const std::string& text = "") {
  Factor factor{text.empty() ? "scenario.capacities_exponent" : text, {}, panels};
  const std::vector<std::string> names = {"0", "0.3", "0.6", "0.9", "1.2", "1.5"};
  for (int k = 0; k < count; ++k) factor.levels.push_back(text.empty() ? names[k % 6] : text);
  MetricAgainstTemperature metric{"NODF by level", "NODF", {}, {}, "curveball null model", factor};
  ZScoresAgainstTemperature z{"z by level", "NODF", "curveball null model", {}, 2, factor};
  TemperatureRecovery recovery{"recovery by level", {}, "95% interval", factor};
  DistanceAgainstTemperature distance{"distance by level", "total variation", {}, {}, factor};
  TrendSummary trend{"trend by level", "nodf_z_score", "dynamics.temperature", 0.95, 2, {}, factor};
  for (int k = 0; k < count; ++k) {
    for (auto p : sample_points()) {
      p.level = k;
      metric.runs.push_back({p.x, 40 + 3 * k + 10 * std::log10(p.x), kNoValue, kNoValue, k});
      metric.null_band.push_back({p.x, 30.0 + k, 28.0 + k, 32.0 + k, k});
      z.runs.push_back({p.x, -5 + k + 4 * std::log10(p.x), kNoValue, kNoValue, k});
      recovery.runs.push_back(p);
      distance.to_entropic.push_back({p.x, 0.01 * (k + 1) * p.x, kNoValue, kNoValue, k});
      distance.to_exact.push_back({p.x, 0.3 + 0.05 * k, kNoValue, kNoValue, k});
    }
    trend.rows.push_back({k, 10, 0.5, 0.01, 1.0 + k, 0.5 + k, 1.5 + k, 10, k, 10 - k});
  }
  if (!text.empty()) metric.title = z.title = recovery.title = distance.title = text;
  return {draw_metric_against_temperature(metric, folder.stem("metric"), options),
          draw_z_scores_against_temperature(z, folder.stem("z"), options),
          draw_temperature_recovery(recovery, folder.stem("recovery"), options),
          draw_distance_against_temperature(distance, folder.stem("distance"), options),
          draw_trend_summary(trend, folder.stem("trend"), options)};
}

}  // namespace

TEST_CASE("figures against temperature draw one series or one panel per level", "[figures]") {
  TemporaryFolder folder("levels");
  for (const bool panels : {false, true}) {
    INFO("panels: " << panels);
    // Six levels as images: the series figures widen for the legend, panels
    // come in two rows of three.
    const std::vector<std::string> images = draw_by_level(folder, {}, 6, panels);
    const std::vector<std::pair<unsigned, unsigned>> sizes =
        panels ? std::vector<std::pair<unsigned, unsigned>>{{1680, 960},
                                                            {1680, 960},
                                                            {1680, 960},
                                                            {1680, 960},
                                                            {1200, 650}}
               : std::vector<std::pair<unsigned, unsigned>>{
                     {1200, 700}, {1200, 700}, {1100, 800}, {1400, 650}, {1200, 650}};
    for (std::size_t k = 0; k < images.size(); ++k) {
      INFO(images[k]);
      const PngSize png = read_png_size(images[k]);
      CHECK(png.valid);
      CHECK(png.width == sizes[k].first);
      CHECK(png.height == sizes[k].second);
    }
    // Three levels as scripts: each level is named, in the legend or a panel title.
    FigureOptions script_only;
    script_only.script_only = true;
    for (const auto& path : draw_by_level(folder, script_only, 3, panels)) {
      INFO(path);
      const std::string script = read_text(path);
      for (const std::string level : {"0", "0.3", "0.6"}) {
        const bool trend = fs::path(path).stem() == "trend";
        const std::string named =
            trend    ? quote_gnuplot_tic_label(level)
            : panels ? quote_gnuplot_text("scenario.capacities_exponent = " + level)
                     : quote_gnuplot_text(level);
        CHECK(script.find(named) != std::string::npos);
      }
      // Series: styles 1 to 3, one per level; panels: style 1 in every panel.
      const bool trend = fs::path(path).stem() == "trend";
      CHECK((script.find(" ls 3 ") != std::string::npos) == (!panels || trend));
      CHECK((script.find("set multiplot layout 1,3") != std::string::npos) == (panels && !trend));
    }
  }
}

TEST_CASE("level names and the factor key with gnuplot syntax run nothing", "[figures]") {
  FigureOptions script_only;
  script_only.script_only = true;
  for (std::size_t k = 0; k < kHostileLabels.size(); ++k) {
    const std::string& label = kHostileLabels[k];
    INFO("label: " << label);
    TemporaryFolder folder("hostile-levels");
    WorkingDirectory cwd(folder.path);
    for (const bool panels : {false, true}) {
      // Every script holds the label only as a quoted literal.
      for (const auto& path : draw_by_level(folder, script_only, 2, panels, label)) {
        INFO(path);
        const std::string script = read_text(path);
        CHECK((script.find(quote_gnuplot_text(label)) != std::string::npos ||
               script.find(quote_gnuplot_tic_label(label)) != std::string::npos));
      }
      // gnuplot draws the two that name commands (series and panels of one, series of the other).
      if (k < 2 && (!panels || k == 0)) {
        for (const auto& path : draw_by_level(folder, {}, 2, panels, label))
          CHECK(read_png_size(path).valid);
      }
    }
    CHECK_FALSE(fs::exists(folder.path / "PWNED"));
  }
}
