// coilkick._core — the compiled part of the Python package.
#include "bindings.hpp"

PYBIND11_MODULE(_core, m) {
  m.doc() = "coilkick compiled core: switch-off transients of inductive loads and clamp choice";
  m.attr("__version__") = COILKICK_VERSION;  // the CMake project version
  coilkick::python::DefineErrors(m);
  coilkick::python::DefineInterrupt(m);
  coilkick::python::DefineCatalogue(m);
  coilkick::python::DefineScenario(m);
  coilkick::python::DefineResults(m);
  coilkick::python::DefineAnalyses(m);
  coilkick::python::DefineRelay(m);
  coilkick::python::DefineLeastSquares(m);
  coilkick::python::DefineFit(m);
}
