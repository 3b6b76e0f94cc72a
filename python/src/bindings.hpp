// The functions of the module, registered by topic.
#pragma once

#include <pybind11/pybind11.h>

namespace allocsim::python {

void register_transport(pybind11::module_& module);    // solve_exact, solve_entropic
void register_temperature(pybind11::module_& module);  // estimate_temperature, analyze, fit_gains,
                                                       // fit_latent_association
void register_structure(pybind11::module_& module);    // binarize, metrics, orderings
void register_nulls(pybind11::module_& module);        // curveball, bicm, fixed_margins
void register_results(pybind11::module_& module);      // reading results files
void register_simulate(pybind11::module_& module);     // one simulation

}  // namespace allocsim::python
