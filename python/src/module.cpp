// The extension allocsim._core; the package allocsim (python/allocsim/)
// wraps its functions into results with attribute access.
#include <pybind11/pybind11.h>

#include "allocsim/core/error.hpp"
#include "bindings.hpp"

namespace py = pybind11;

PYBIND11_MODULE(_core, m) {
  py::options options;
  options.disable_function_signatures();  // the package sets signatures from the option tables
  m.doc() = "allocsim's solvers, estimator and structure metrics on numpy arrays";
  m.attr("__version__") = ALLOCSIM_VERSION;
  // Unusable input: the library's InputError, whose message starts with the
  // argument or option it names, becomes ValueError.
  py::register_exception_translator([](std::exception_ptr error) {
    try {
      if (error) std::rethrow_exception(error);
    } catch (const allocsim::InputError& e) {
      PyErr_SetString(PyExc_ValueError, e.what());
    }
  });
  allocsim::python::register_transport(m);
  allocsim::python::register_temperature(m);
  allocsim::python::register_structure(m);
  allocsim::python::register_nulls(m);
  allocsim::python::register_results(m);
  allocsim::python::register_simulate(m);
}
