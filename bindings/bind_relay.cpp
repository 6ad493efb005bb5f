// The relay armature model's calibration report: how closely the model meets each data-sheet
// target, and the parameters it derived (each named with its unit).
#include <pybind11/stl.h>

#include "bindings.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/relay/relay_calibration.hpp"

namespace py = pybind11;

namespace coilkick::python {

void DefineRelay(py::module_& m) {
  m.def(
      "relay_calibration",
      [](const PyScenario& s) {
        const auto sheet = drivers::relay_datasheet(s.scenario.driver);
        const relay::RelayCalibration* cal = nullptr;
        run_interruptibly([&] {
          cal = &relay::calibrate_relay_cached(sheet);
        });
        py::list targets;
        for (const auto& t : cal->targets) {
          py::dict d;
          d["name"] = t.name;
          d["target"] = t.target;
          d["achieved"] = t.achieved;
          d["relative_error"] = t.relative_error();
          targets.append(d);
        }
        const auto& p = cal->parameters;
        const auto& mg = p.magnetic;
        const auto& me = p.mechanics;
        py::dict params;
        params["turns"] = mg.turns;
        params["pole_area_m2"] = mg.pole_area_m2;
        params["core_reluctance_per_H"] = mg.core_reluctance_per_H;
        params["leakage_inductance_H"] = mg.leakage_inductance_H;
        params["closed_inductance_H"] = mg.inductance_H(me.residual_gap_m);
        params["open_inductance_H"] = mg.inductance_H(me.open_gap_m);
        params["mass_kg"] = me.mass_kg;
        params["residual_gap_m"] = me.residual_gap_m;
        params["make_gap_m"] = me.make_gap_m;
        params["open_gap_m"] = me.open_gap_m;
        params["spring_preload_N"] = me.spring_preload_N;
        params["spring_rate_N_per_m"] = me.spring_rate_N_per_m;
        params["contact_spring_rate_N_per_m"] = me.contact_spring_rate_N_per_m;
        params["damping_N_s_per_m"] = me.damping_N_s_per_m;
        params["stop_stiffness_N_per_m1_5"] = me.stop_stiffness_N_per_m1_5;
        params["stop_damping_s_per_m"] = me.stop_damping_s_per_m;
        py::dict out;
        out["targets"] = targets;
        out["parameters"] = params;
        return out;
      },
      py::arg("scenario"),
      "Calibration of the scenario's relay armature model from its data-sheet values: targets (name, target, "
      "achieved, relative_error) and the derived parameters. Raises ValueError naming a missing value.");
}

}  // namespace coilkick::python
