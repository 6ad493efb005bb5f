// Sweep points, tolerance plans and points, suggestions: the compute-heavy parts of the
// Python analyses, each releasing the GIL while it runs on C++ threads. The Python package
// splits the work across an executor (concurrent.futures or dask) by calling these on chunks.
#include <pybind11/stl.h>

#include "bindings.hpp"
#include "coilkick/analyses/parallel.hpp"
#include "coilkick/analyses/run_summary.hpp"
#include "coilkick/analyses/suggest.hpp"
#include "coilkick/analyses/tolerance.hpp"
#include "coilkick/drivers/faults.hpp"

namespace py = pybind11;

namespace coilkick::python {
namespace {

py::dict summary_dict(const analyses::RunSummary& r) {
  py::dict metrics;
  for (const auto& [k, v] : r.metrics.items()) metrics[py::str(k)] = v;
  py::list failed;
  for (const auto& c : r.checks) {
    if (c.status == drivers::CheckStatus::fail) failed.append(c.name);
  }
  py::dict d;
  d["metrics"] = metrics;
  d["overall"] = r.ok() ? drivers::to_string(r.status) : std::string("error");
  d["error"] = r.error;
  d["failed_checks"] = failed;
  return d;
}

int threads_or_default(int t) { return t > 0 ? t : analyses::default_thread_count(); }

}  // namespace

void DefineAnalyses(py::module_& m) {
  m.def(
      "run_points",
      [](const PyScenario& s, const std::vector<std::string>& keys, const std::vector<std::vector<double>>& values, int threads) {
        std::vector<analyses::RunSummary> out(values.size());
        run_interruptibly([&] {
          analyses::parallel_for(static_cast<int>(values.size()), threads_or_default(threads), [&](int i) {
            scenario::Scenario si = s.scenario;
            const auto& v = values[static_cast<std::size_t>(i)];
            try {
              if (v.size() != keys.size()) throw std::invalid_argument("each point needs one value per key");
              for (std::size_t k = 0; k < keys.size(); ++k) scenario::set_numeric_key(si, keys[k], v[k], *s.parts);
            } catch (const std::invalid_argument& e) {
              out[static_cast<std::size_t>(i)].error = std::string("invalid at this point: ") + e.what();
              return;
            }
            out[static_cast<std::size_t>(i)] = analyses::summarize_run(si.driver, *s.parts);
          });
        });
        py::list l;
        for (const auto& r : out) l.append(summary_dict(r));
        return l;
      },
      py::arg("scenario"), py::arg("keys"), py::arg("values"), py::arg("threads") = 0,
      "Run the scenario at each point (one value per key, SI base units); list of {metrics, overall, error, failed_checks}.");

  m.def(
      "tolerance_spreads",
      [](const PyScenario& s) {
        py::list l;
        for (const auto& sp : analyses::scenario_spreads(s.scenario, *s.parts)) {
          py::dict d;
          d["name"] = sp.name;
          d["low"] = sp.low;
          d["nominal"] = sp.nominal;
          d["high"] = sp.high;
          d["distribution"] = sp.uniform ? "uniform" : "normal, tolerance at 3 sigma";
          l.append(d);
        }
        return l;
      },
      py::arg("scenario"), "The spreads the scenario declares, with absolute low/nominal/high values.");

  m.def(
      "tolerance_points",
      [](const PyScenario& s, int samples, unsigned long long seed, const std::vector<int>& indices, int threads) {
        const auto spreads = analyses::scenario_spreads(s.scenario, *s.parts);
        std::vector<analyses::ToleranceRun> plan;
        std::vector<analyses::RunSummary> out(indices.size());
        run_interruptibly([&] {
          // The plan too: drawing hundreds of thousands of samples takes a while (and Ctrl-C may come).
          plan = analyses::tolerance_plan(spreads, samples, seed);
          for (int i : indices) {
            if (i < 0 || i >= static_cast<int>(plan.size())) throw std::invalid_argument("tolerance point index out of range");
          }
          const auto starts = analyses::nominal_operating_points(s.scenario, *s.parts);
          analyses::parallel_for(static_cast<int>(indices.size()), threads_or_default(threads), [&](int k) {
            const auto& run = plan[static_cast<std::size_t>(indices[static_cast<std::size_t>(k)])];
            out[static_cast<std::size_t>(k)] = analyses::run_tolerance_point(s.scenario, spreads, run.values, *s.parts, starts);
          });
        });
        py::list l;
        for (std::size_t k = 0; k < indices.size(); ++k) {
          py::dict d = summary_dict(out[k]);
          const auto& run = plan[static_cast<std::size_t>(indices[k])];
          d["index"] = indices[k];
          d["label"] = run.label;
          d["values"] = run.values;
          l.append(d);
        }
        return l;
      },
      py::arg("scenario"), py::arg("samples"), py::arg("seed"), py::arg("indices"), py::arg("threads") = 0,
      "Run the given points of the tolerance plan (corners first, then samples); the same index gives the same point "
      "in any process.");

  m.def(
      "tolerance_point_count",
      [](const PyScenario& s, int samples) {
        const auto k = analyses::scenario_spreads(s.scenario, *s.parts).size();
        return (k == 0 ? 0 : 1 << k) + samples;
      },
      py::arg("scenario"), py::arg("samples"));

  m.def(
      "faults",
      [](const PyScenario& s) {
        drivers::FaultReport rep;
        run_interruptibly([&] {
          rep = drivers::analyse_faults(s.scenario.driver, *s.parts);
        });
        auto one = [](const drivers::FaultCase& c) {
          py::dict readings;
          for (const auto& r : c.readings) readings[py::str(r.node)] = py::make_tuple(r.on_V, r.off_V);
          py::dict heat;
          for (const auto& [el, p] : c.on_state_heat_W) heat[py::str(el)] = p;
          py::dict d;
          d["part"] = c.part;
          d["fault"] = c.fault;
          d["readings"] = readings;
          d["coil_current_on_A"] = c.coil_current_on_A;
          d["coil_current_off_A"] = c.coil_current_off_A;
          d["supply_current_on_A"] = c.supply_current_on_A;
          d["on_state_heat_W"] = heat;
          d["symptoms"] = c.symptoms;
          d["reasons"] = c.reasons;
          d["error"] = c.error;
          py::dict m;
          if (c.switch_off_run) {
            for (const auto& [k, v] : c.switch_off.items()) m[py::str(k)] = v;
          }
          d["switch_off"] = m;
          return d;
        };
        py::list faults;
        for (const auto& c : rep.faults) faults.append(one(c));
        py::dict out;
        out["healthy"] = one(rep.healthy);
        out["faults"] = faults;
        return out;
      },
      py::arg("scenario"),
      "Fault signatures: healthy and single-fault DC readings {node: (on_V, off_V)}, coil currents (A), on-state heat "
      "(W), switch-off metrics, symptoms and the reasons behind them.");

  m.def(
      "suggest",
      [](const PyScenario& s, double max_release_time_s, double max_switch_voltage_V, int threads, const std::string& time_metric,
         const std::vector<std::string>& kinds) {
        analyses::SuggestLimits limits{max_release_time_s, max_switch_voltage_V, time_metric, {}};
        for (const auto& k : kinds) limits.kinds.push_back(drivers::parse_clamp_kind(k));
        std::vector<analyses::Suggestion> list;
        run_interruptibly([&] {
          list = analyses::suggest_clamps(s.scenario, *s.parts, limits, threads_or_default(threads));
        });
        py::list l;
        for (const auto& g : list) {
          py::dict d = summary_dict(g.run);
          d["clamp_kind"] = drivers::to_string(g.clamp.kind);
          d["parts"] = g.parts;
          d["meets_limits"] = g.meets;
          d["release_margin"] = g.release_margin;
          d["voltage_margin"] = g.voltage_margin;
          l.append(d);
        }
        return l;
      },
      py::arg("scenario"), py::arg("max_release_time_s"), py::arg("max_switch_voltage_V"), py::arg("threads") = 0,
      py::arg("time_metric") = "release_time_s", py::arg("kinds") = std::vector<std::string>{}, "Preferred-value clamps ranked against the limits (see README, 'suggest').");
}

}  // namespace coilkick::python
