# Embeds plots/style.gp into the plots layer (the generated header
# plot_style_text.hpp holds it as kPlotStyle), so the program draws with its
# own style wherever it runs; and tells the plots layer where gnuplot is.
set_property(DIRECTORY ${PROJECT_SOURCE_DIR} APPEND PROPERTY CMAKE_CONFIGURE_DEPENDS
  ${PROJECT_SOURCE_DIR}/plots/style.gp)
file(READ ${PROJECT_SOURCE_DIR}/plots/style.gp ALLOCSIM_PLOT_STYLE_TEXT)
configure_file(${PROJECT_SOURCE_DIR}/plots/plot_style_text.hpp.in
  ${PROJECT_BINARY_DIR}/generated/plots/plot_style_text.hpp @ONLY)
target_include_directories(allocsim_plots PRIVATE ${PROJECT_BINARY_DIR}/generated/plots)
target_compile_definitions(allocsim_plots PRIVATE ALLOCSIM_GNUPLOT="${GNUPLOT_EXECUTABLE}")
