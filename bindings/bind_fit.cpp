// Fits to bench captures (analyses/fit.hpp) and the capture reader (scenario/capture.hpp), open
// to Python; the package's coilkick.fit / read_capture / model_trace wrap them (api_fit.py).
#include <pybind11/stl.h>

#include <cmath>
#include <memory>

#include "bindings.hpp"
#include "coilkick/analyses/coil_record.hpp"
#include "coilkick/analyses/fit.hpp"
#include "coilkick/scenario/capture.hpp"

namespace py = pybind11;

namespace coilkick::python {
namespace {

analyses::CaptureEdge edge_of(const std::string& e) {
  if (e == "switch-off" || e == "switch_off") return analyses::CaptureEdge::switch_off;
  if (e == "switch-on" || e == "switch_on") return analyses::CaptureEdge::switch_on;
  throw std::invalid_argument("edge: '" + e + "' is neither 'switch-off' nor 'switch-on'");
}

// A fit and the scenario it changed (for the coil record).
struct PyFit {
  analyses::CaptureFit fit;
  scenario::Scenario fitted;
};

py::dict motion_dict(const analyses::ArmatureMotion& m) {
  py::dict d;
  d["start_s"] = m.start_s;
  d["end_s"] = m.end_s;
  return d;
}

}  // namespace

void DefineFit(py::module_& m) {
  m.def(
      "read_capture",
      [](const std::string& path, const std::map<std::string, std::string>& channels, const std::map<std::string, std::string>& units,
         double shunt_ohm, bool time_zero_at_edge) {
        scenario::CaptureOptions o;
        o.channels = channels;
        o.units = units;
        o.shunt_resistance_ohm = shunt_ohm;
        if (time_zero_at_edge) o.time_zero = scenario::CaptureTimeZero::switch_voltage_edge;
        const auto c = scenario::read_capture_file(path, o);
        py::dict d;
        d["time_s"] = c.time_s;
        d["current_A"] = c.current_A;
        d["voltage_V"] = c.voltage_V;
        d["contact"] = c.contact;
        d["drive_V"] = c.drive_V;
        return d;
      },
      py::arg("path"), py::arg("channels"), py::arg("units"), py::arg("shunt_ohm") = std::nan(""), py::arg("time_zero_at_edge") = false,
      "Read a capture CSV (see README, 'Fitting to a bench capture'); errors are ValueError 'file:line: ...'.");

  m.def(
      "model_trace",
      [](const PyScenario& s, const std::string& edge, const std::vector<double>& times, const std::string& time_zero) {
        if (time_zero != "switch-voltage" && time_zero != "drive") {
          throw std::invalid_argument("time_zero: '" + time_zero + "' is neither 'switch-voltage' nor 'drive'");
        }
        const auto a = time_zero == "drive" ? analyses::EdgeAlignment::drive : analyses::EdgeAlignment::switch_voltage;
        analyses::ModelTrace t;
        run_interruptibly([&] { t = analyses::model_trace(s.scenario, *s.parts, edge_of(edge), times, a); });
        py::dict d;
        d["current_A"] = t.current_A;
        d["voltage_V"] = t.voltage_V;
        d["edge_time_s"] = t.edge_time_s;
        d["make_time_s"] = t.make_time_s;
        return d;
      },
      py::arg("scenario"), py::arg("edge"), py::arg("times_after_edge_s"), py::arg("time_zero") = "switch-voltage",
      "The model's coil current and switch voltage at times after its own switch-voltage (or drive) edge.");

  m.def(
      "default_fit_keys", [](const PyScenario& s, const std::string& edge) { return analyses::default_fit_keys(s.scenario, edge_of(edge)); },
      py::arg("scenario"), py::arg("edge"));

  py::class_<PyFit, std::shared_ptr<PyFit>>(m, "CaptureFit", "A scenario fitted to a capture (coilkick.fit wraps it).")
      .def_property_readonly("edge", [](const PyFit& f) { return std::string(analyses::to_string(f.fit.edge)); })
      .def_property_readonly("time_zero", [](const PyFit& f) { return std::string(analyses::to_string(f.fit.alignment)); })
      .def_property_readonly("keys", [](const PyFit& f) { return f.fit.keys; })
      .def_property_readonly("start_values", [](const PyFit& f) { return f.fit.start_values; })
      .def_property_readonly("values",
                             [](const PyFit& f) { return std::vector<double>(f.fit.result.parameters.data(), f.fit.result.parameters.data() + f.fit.keys.size()); })
      .def_property_readonly("standard_errors",
                             [](const PyFit& f) {
                               return std::vector<double>(f.fit.result.standard_errors.data(), f.fit.result.standard_errors.data() + f.fit.keys.size());
                             })
      .def_property_readonly("undetermined", [](const PyFit& f) { return f.fit.undetermined; })
      .def_property_readonly("current_noise_A", [](const PyFit& f) { return f.fit.current_noise_A; })
      .def_property_readonly("time_shift_s", [](const PyFit& f) { return f.fit.time_shift_s; })
      .def_property_readonly("time_shift_error_s", [](const PyFit& f) { return f.fit.time_shift_error_s; })
      .def_property_readonly("residual_rms", [](const PyFit& f) { return f.fit.result.residual_rms; })
      .def_property_readonly("iterations", [](const PyFit& f) { return f.fit.result.iterations; })
      .def_property_readonly("engine_runs", [](const PyFit& f) { return f.fit.result.evaluations; })
      .def_property_readonly("time_after_edge_s", [](const PyFit& f) { return f.fit.time_after_edge_s; })
      .def_property_readonly("model_current_A", [](const PyFit& f) { return f.fit.model_current_A; })
      .def_property_readonly("measured_armature_motion", [](const PyFit& f) { return motion_dict(f.fit.measured_motion); })
      .def_property_readonly("model_armature_motion", [](const PyFit& f) { return motion_dict(f.fit.model_motion); })
      .def_property_readonly("model_operate_time_s", [](const PyFit& f) { return f.fit.model_make_time_s; })
      .def_property_readonly("measured_release_current_A", [](const PyFit& f) { return f.fit.measured_release_current_A; })
      .def_property_readonly("measured_contact_time_s", [](const PyFit& f) { return f.fit.measured_contact_time_s; })
      .def(
          "coil_record",
          [](const PyFit& f, const std::string& name, const std::string& capture_file, const std::string& date) {
            return analyses::coil_record_toml(f.fitted, f.fit, name, capture_file, date);
          },
          py::arg("name"), py::arg("capture_file"), py::arg("date"),
          "The fitted coil as a models/coils record (TOML text), each value with unit and source.");

  m.def(
      "fit_capture",
      [](const PyScenario& s, const std::vector<double>& time_s, const std::vector<double>& current_A, const std::vector<double>& voltage_V,
         const std::vector<double>& contact, const std::vector<double>& drive_V, const std::vector<std::string>& keys, double noise_A) {
        scenario::Capture c;
        c.time_s = time_s;
        c.current_A = current_A;
        c.voltage_V = voltage_V;
        c.contact = contact;
        c.drive_V = drive_V;
        auto out = std::make_shared<PyFit>();
        run_interruptibly([&] {
          analyses::FitOptions o;
          o.current_noise_A = noise_A;
          const auto k = keys.empty() ? analyses::default_fit_keys(s.scenario, analyses::capture_edge(c)) : keys;
          out->fit = analyses::fit_capture(s.scenario, *s.parts, c, k, o);
          out->fitted = analyses::fitted_scenario(s.scenario, *s.parts, out->fit);
        });
        return out;
      },
      py::arg("scenario"), py::arg("time_s"), py::arg("current_A"), py::arg("voltage_V"), py::arg("contact"), py::arg("drive_V"), py::arg("keys"),
      py::arg("noise_A") = 0.0);
}

}  // namespace coilkick::python
