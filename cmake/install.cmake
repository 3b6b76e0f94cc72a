# `cmake --install build [--prefix P]` installs the program, the libraries of
# each layer, their public headers and a package configuration, so that a
# C++ program can use `find_package(allocsim)` and link `allocsim::analysis`
# (or core, sim, results, experiments, plots).
include(GNUInstallDirs)
include(CMakePackageConfigHelpers)

set(ALLOCSIM_LAYERS core analysis sim results experiments plots)
set(ALLOCSIM_LAYER_TARGETS)
foreach(layer IN LISTS ALLOCSIM_LAYERS)
  list(APPEND ALLOCSIM_LAYER_TARGETS allocsim_${layer})
endforeach()
set_target_properties(allocsim_flags PROPERTIES EXPORT_NAME flags)

install(TARGETS allocsim ${ALLOCSIM_LAYER_TARGETS} allocsim_flags
  EXPORT allocsimTargets
  RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR}
  ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR})
install(DIRECTORY include/allocsim DESTINATION ${CMAKE_INSTALL_INCLUDEDIR})
install(EXPORT allocsimTargets NAMESPACE allocsim::
  DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/allocsim)
configure_package_config_file(cmake/allocsimConfig.cmake.in
  ${PROJECT_BINARY_DIR}/allocsimConfig.cmake
  INSTALL_DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/allocsim)
write_basic_package_version_file(${PROJECT_BINARY_DIR}/allocsimConfigVersion.cmake
  COMPATIBILITY SameMinorVersion)
install(FILES ${PROJECT_BINARY_DIR}/allocsimConfig.cmake
              ${PROJECT_BINARY_DIR}/allocsimConfigVersion.cmake
  DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/allocsim)
