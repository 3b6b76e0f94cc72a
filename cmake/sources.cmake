# The sources of each layer and of the program. One line per file; add a
# file's line only once the file exists.

allocsim_layer(core
  SOURCES
    core/atomic_file.cpp
    core/output_file.cpp
    core/csv.cpp
    core/csv_text.cpp
    core/csv_write.cpp
    core/json.cpp
    core/label_alignment.cpp
    core/memory_limit.cpp
    core/problem.cpp
    core/random.cpp
  LINKS Eigen3::Eigen)

allocsim_layer(analysis
  SOURCES
    analysis/entropic_transport.cpp
    analysis/exact_transport.cpp
    analysis/binarize.cpp
    analysis/nestedness.cpp
    analysis/rankings.cpp
    analysis/null_models.cpp
    analysis/mersenne_twister_64.cpp
    analysis/compare.cpp
    analysis/additive_residual.cpp
    analysis/two_margin_system.cpp
    analysis/observed_allocation.cpp
    analysis/temperature.cpp
    analysis/marginal_newton.cpp
    analysis/gains_fit.cpp
    analysis/model_table.cpp
    analysis/trait_features.cpp
    analysis/latent_association.cpp
    analysis/gains_reconstruction.cpp
    analysis/allocation_report.cpp
    analysis/thread_team.cpp
    analysis/report_exports.cpp
  LINKS allocsim::core allocsim_lemon OpenMP::OpenMP_CXX)

allocsim_layer(sim
  SOURCES
    sim/engine.cpp
    sim/gumbel_rule.cpp
    sim/learn_rule.cpp
    sim/price_rule.cpp
    sim/queue_rule.cpp
    sim/rules.cpp
    sim/scenario.cpp
    sim/settling.cpp
  LINKS allocsim::core)

# The results file: the one layer that knows HDF5 and the file layout.
allocsim_layer(results
  SOURCES
    results/hdf5_io.cpp
    results/recorder.cpp
    results/reconstruction_reader.cpp
    results/reconstruction_writer.cpp
    results/report_writer.cpp
    results/results_file.cpp
    results/results_reader.cpp
    results/run_records.cpp
    results/run_store.cpp
  LINKS allocsim::sim allocsim::analysis hdf5::hdf5_cpp hdf5::hdf5)

allocsim_layer(experiments
  SOURCES
    experiments/analysis_settings.cpp
    experiments/benchmark_draws.cpp
    experiments/benchmark_score.cpp
    experiments/benchmark_set.cpp
    experiments/benchmark_sources.cpp
    experiments/experiment.cpp
    experiments/key_errors.cpp
    experiments/keys.cpp
    experiments/score_file.cpp
    experiments/simulation.cpp
    experiments/sweep.cpp
    experiments/replay.cpp
    experiments/sweep_runner.cpp
    experiments/trend.cpp
  LINKS allocsim::results Boost::program_options)

allocsim_layer(plots
  SOURCES
    plots/figure_data.cpp
    plots/figure_script.cpp
    plots/gnuplot_text.cpp
    plots/heatmap.cpp
    plots/latent_scores.cpp
    plots/level_plots.cpp
    plots/null_histogram.cpp
    plots/results_figures.cpp
    plots/ordering.cpp
    plots/scores.cpp
    plots/series.cpp
    plots/trajectories.cpp
    plots/trend_summary.cpp
  LINKS allocsim::experiments allocsim_gnuplot)
include(plots/style.cmake)

add_executable(allocsim
  cli/commands.cpp
  cli/demo_command.cpp
  cli/score_command.cpp
  cli/synth_command.cpp
  cli/main.cpp
  cli/mpi_sweep.cpp
  cli/analyze_command.cpp
  cli/gains_reconstruction_output.cpp
  cli/inspect_command.cpp
  cli/plot_command.cpp
  cli/options.cpp
  cli/run_command.cpp
  cli/simulate_command.cpp
  cli/solve_command.cpp
  cli/trend_command.cpp)
target_compile_definitions(allocsim PRIVATE ALLOCSIM_VERSION="${PROJECT_VERSION}")
target_include_directories(allocsim PRIVATE ${PROJECT_SOURCE_DIR}/cli)
target_link_libraries(allocsim PRIVATE allocsim::experiments allocsim::analysis allocsim::plots Boost::program_options)
if(MPI_CXX_FOUND)
  target_compile_definitions(allocsim PRIVATE ALLOCSIM_WITH_MPI)
  target_link_libraries(allocsim PRIVATE MPI::MPI_CXX)
endif()
