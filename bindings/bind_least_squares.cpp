// The least-squares solver of the fits (analyses/least_squares.hpp), open to Python with a
// residual function written there: the fits' building block, and the way its standard errors
// are checked against scipy.optimize.least_squares on the same problem.
#include <pybind11/eigen.h>
#include <pybind11/functional.h>
#include <pybind11/stl.h>

#include "bindings.hpp"
#include "coilkick/analyses/least_squares.hpp"

namespace py = pybind11;

namespace coilkick::python {

void DefineLeastSquares(py::module_& m) {
  m.def(
      "levenberg_marquardt",
      [](const std::function<Eigen::VectorXd(const Eigen::VectorXd&)>& residuals, const Eigen::VectorXd& initial,
         const Eigen::VectorXd& scale) {
        analyses::LeastSquaresProblem p;
        p.initial = initial;
        p.scale = scale;
        p.residuals = [&residuals](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = residuals(x); };
        const auto fit = analyses::levenberg_marquardt(p);
        py::dict d;
        d["parameters"] = fit.parameters;
        d["standard_errors"] = fit.standard_errors;
        d["covariance"] = fit.covariance;
        d["residual_rms"] = fit.residual_rms;
        d["iterations"] = fit.iterations;
        d["evaluations"] = fit.evaluations;
        d["converged"] = fit.converged;
        d["message"] = fit.message;
        return d;
      },
      py::arg("residuals"), py::arg("initial"), py::arg("scale"),
      "Levenberg–Marquardt: minimise the sum of squares of residuals(parameters) (a 1-D array) from `initial`, "
      "each parameter's typical size in `scale`. Returns a dict: parameters, standard_errors (from the Jacobian at "
      "the optimum), covariance, residual_rms, iterations, evaluations, converged, message.");
}

}  // namespace coilkick::python
