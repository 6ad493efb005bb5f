// C++ errors as Python exceptions with the same message: bad scenario input -> ScenarioError,
// bad catalogue data -> CatalogueError (both ValueError), solver failure -> SimulationError
// (RuntimeError); any other std::invalid_argument is a ValueError (pybind11's default).
#include <pybind11/pybind11.h>

#include "bindings.hpp"
#include "coilkick/engine/errors.hpp"

namespace py = pybind11;

namespace coilkick::python {

void DefineErrors(py::module_& m) {
  py::register_exception<scenario::ScenarioError>(m, "ScenarioError", PyExc_ValueError);
  py::register_exception<catalogue::CatalogueError>(m, "CatalogueError", PyExc_ValueError);
  py::register_exception<engine::SimulationError>(m, "SimulationError", PyExc_RuntimeError);
}

}  // namespace coilkick::python
