// Switch-off results: metrics, checks, and waveforms as numpy arrays that share the result's
// memory (no copy; the array keeps the result alive).
#include <pybind11/numpy.h>
#include <pybind11/stl.h>

#include "bindings.hpp"
#include "coilkick/drivers/compare.hpp"
#include "coilkick/drivers/switch_off.hpp"

namespace py = pybind11;

namespace coilkick::python {
namespace {

struct PyRun {
  std::shared_ptr<const drivers::SwitchOffResult> r;
};

py::dict metrics_dict(const drivers::Metrics& m) {
  py::dict d;
  for (const auto& [k, v] : m.items()) d[py::str(k)] = v;
  return d;
}

py::list checks_list(const std::vector<drivers::RatingCheck>& checks) {
  py::list l;
  for (const auto& c : checks) {
    py::dict d;
    d["name"] = c.name;
    d["status"] = drivers::to_string(c.status);
    d["value"] = c.value;
    d["limit"] = c.limit;
    d["fail_limit"] = c.fail_limit;
    d["unit"] = c.unit;
    d["detail"] = c.detail;
    l.append(d);
  }
  return l;
}

// A read-only 1-D view of an Eigen vector owned by the result; `owner` keeps it alive. Read-only:
// a write would change the result behind its metrics.
py::array_t<double> view(const Eigen::VectorXd& v, py::handle owner) {
  py::array_t<double> a({static_cast<py::ssize_t>(v.size())}, {static_cast<py::ssize_t>(sizeof(double))}, v.data(), owner);
  a.attr("setflags")(py::arg("write") = false);
  return a;
}

}  // namespace

void DefineResults(py::module_& m) {
  py::class_<PyRun>(m, "RunResult", "One switch-off: on-state check, metrics (SI unit in each name), rating checks, waveforms.")
      .def_property_readonly("metrics", [](const PyRun& p) { return metrics_dict(p.r->metrics); },
                             "dict of metric name -> value in the unit its name ends with (NaN where not applicable)")
      .def_property_readonly("checks", [](const PyRun& p) { return checks_list(p.r->checks); },
                             "list of rating checks: name, status (pass/warn/fail), value, limit, unit, detail")
      .def_property_readonly("overall", [](const PyRun& p) { return drivers::to_string(drivers::overall_status(p.r->checks)); },
                             "worst check status")
      .def_property_readonly("time_s", [](py::object self) { return view(self.cast<const PyRun&>().r->waveforms.time_s, self); },
                             "accepted time points (s), from the on-state at 0; shares memory with the result")
      .def_property_readonly("switch_voltage_V",
                             [](py::object self) { return view(self.cast<const PyRun&>().r->waveforms.switch_voltage_V, self); },
                             "voltage across the switch (V) at time_s")
      .def_property_readonly("coil_current_A",
                             [](py::object self) { return view(self.cast<const PyRun&>().r->waveforms.coil_current_A, self); },
                             "coil current (A) at time_s")
      .def_property_readonly("clamp_current_A",
                             [](py::object self) { return view(self.cast<const PyRun&>().r->waveforms.clamp_current_A, self); },
                             "current through the first clamp part (A) at time_s")
      .def_property_readonly("armature_gap_m",
                             [](py::object self) { return view(self.cast<const PyRun&>().r->waveforms.armature_gap_m, self); },
                             "armature gap (m) at time_s with the armature model (relay.armature_model); empty otherwise")
      .def(
          "node_voltage_V", [](const PyRun& p, const std::string& node) {
            const Eigen::VectorXd v = p.r->transient->node_voltage_V(node);
            return py::array_t<double>(static_cast<py::ssize_t>(v.size()), v.data());
          },
          py::arg("node"), "voltage of a node (V) at time_s (a copy); nodes: supply, logic, base, switch ...")
      .def_property_readonly(
          "channels",
          [](const PyRun& p) {
            py::list l;
            for (std::size_t k = 0; k < p.r->channels.size(); ++k) {
              const auto& ch = p.r->channels[k];
              py::dict d;
              d["name"] = drivers::channel_label(ch.name);
              d["switch_off_at_s"] = drivers::channel_driver_spec(p.r->spec, k).drive.switch_off_at_s;
              d["metrics"] = metrics_dict(ch.metrics);
              d["checks"] = checks_list(ch.checks);
              d["overall"] = drivers::to_string(drivers::overall_status(ch.checks));
              d["time_s"] = py::array_t<double>(ch.waveforms.time_s.size(), ch.waveforms.time_s.data());
              d["switch_voltage_V"] = py::array_t<double>(ch.waveforms.switch_voltage_V.size(), ch.waveforms.switch_voltage_V.data());
              d["coil_current_A"] = py::array_t<double>(ch.waveforms.coil_current_A.size(), ch.waveforms.coil_current_A.data());
              l.append(d);
            }
            return l;
          },
          "a board of several channels (scenario [[channel]]): one dict per channel, the first (top-level) channel "
          "first — 'name', 'metrics', 'checks', 'overall', 'switch_off_at_s' (its edge), waveforms 'time_s', 'switch_voltage_V', 'coil_current_A' "
          "(copies); empty with one channel. metrics/checks/overall above are the first channel's with the board's, "
          "checks every channel's")
      .def_property_readonly("node_names", [](const PyRun& p) { return p.r->transient->circuit().node_names(); })
      .def_property_readonly("switch_off_at_s", [](const PyRun& p) { return p.r->spec.drive.switch_off_at_s; },
                             "start of the switch-off edge (s)")
      .def_property_readonly("accepted_steps", [](const PyRun& p) { return p.r->transient->statistics().accepted_steps; })
      .def_property_readonly(
          "hold",
          [](const PyRun& p) -> py::object {
            const auto* h = p.r->hold.get();
            if (!h) return py::none();
            // Copies: the hold's runs are small and belong to the result's hold stage.
            auto series = [](const engine::TransientResult* r, double t0) {
              py::dict d;
              if (!r) {
                d["time_s"] = py::array_t<double>(0);
                d["coil_current_A"] = py::array_t<double>(0);
                return d;
              }
              const Eigen::VectorXd i = r->state("coil.current");
              Eigen::VectorXd t = Eigen::Map<const Eigen::VectorXd>(r->times_s().data(), static_cast<Eigen::Index>(r->times_s().size()));
              t.array() -= t0;
              d["time_s"] = py::array_t<double>(t.size(), t.data());
              d["coil_current_A"] = py::array_t<double>(i.size(), i.data());
              return d;
            };
            py::dict d;
            d["pull_in"] = series(h->pull_in.get(), 0.0);
            d["period"] = series(h->period.get(), h->period ? h->period->start_time_s() : 0.0);
            d["period_s"] = h->period_s;
            d["duty"] = h->duty;
            d["steady_state_method"] = h->steady.method == engine::PeriodicMethod::shooting ? "shooting" : "direct periods";
            d["newton_iterations"] = h->steady.newton_iterations;
            d["periods_simulated"] = h->steady.period_runs;
            d["largest_multiplier"] = h->steady.largest_multiplier;
            d["note"] = h->steady.note;
            return std::move(d);
          },
          "with a PWM hold (scenario [hold]): dict with 'pull_in' and 'period' (each 'time_s' — from the drive's "
          "rising edge, and from the period's start at the falling edge — and 'coil_current_A'), 'period_s', 'duty', "
          "how the steady state was found ('steady_state_method', 'newton_iterations', 'periods_simulated', "
          "'largest_multiplier' — of one period at shooting's last Newton step, < 1 where the state attracts; NaN "
          "without shooting —, 'note'); "
          "None without a hold");

  m.def(
      "run",
      [](const PyScenario& s) {
        std::shared_ptr<const drivers::SwitchOffResult> r;
        // The switch-off takes milliseconds to seconds: let other Python threads run, and Ctrl-C stop it.
        run_interruptibly([&] {
          r = std::make_shared<const drivers::SwitchOffResult>(drivers::simulate_switch_off(s.scenario.driver, *s.parts));
        });
        return PyRun{r};
      },
      py::arg("scenario"), "Simulate one switch-off of the scenario's driver.");

  m.def(
      "compare",
      [](const PyScenario& s, const std::vector<std::string>& kinds) {
        std::vector<drivers::ClampKind> k;
        for (const auto& name : kinds) k.push_back(drivers::parse_clamp_kind(name));
        std::vector<drivers::ComparisonRow> rows;
        run_interruptibly([&] {
          rows = drivers::compare_clamps(s.scenario.driver, *s.parts, k);
        });
        py::list out;
        for (auto& row : rows) {
          py::object result = py::none();
          if (row.result) result = py::cast(PyRun{std::make_shared<const drivers::SwitchOffResult>(std::move(*row.result))});
          out.append(py::make_tuple(drivers::to_string(row.kind), row.parts, result, row.error));
        }
        return out;
      },
      py::arg("scenario"), py::arg("kinds"),
      "Run the given clamp kinds on the driver; list of (kind, parts, RunResult or None, error), fastest release first.");
}

}  // namespace coilkick::python
