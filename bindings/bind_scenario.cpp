// Scenarios: parsed from TOML text (a file read by Python, or a dict the package turns into
// TOML), so a bad key in a dict gives the same message as in a file.
#include <pybind11/stl.h>

#include <algorithm>

#include "bindings.hpp"
#include "coilkick/drivers/compare.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"

namespace py = pybind11;

namespace coilkick::python {

PyScenario rebuild_scenario(const std::string& text, const std::string& name, const std::string& models_dir,
                            const std::vector<std::pair<std::string, double>>& assignments,
                            const std::string& clamp_kind) {
  PyScenario p;
  p.text = text;
  p.name = name;
  p.models_dir = models_dir;
  p.parts = catalogue_for(models_dir);
  p.scenario = scenario::read_scenario_text(text, name, *p.parts);
  if (!clamp_kind.empty()) p.scenario.driver.clamp.kind = drivers::parse_clamp_kind(clamp_kind);
  for (const auto& [k, v] : assignments) scenario::set_numeric_key(p.scenario, k, v, *p.parts);
  // A value set after parsing is checked like one in the file (ValueError naming the field).
  if (!assignments.empty()) drivers::check_driver_spec(p.scenario.driver);
  p.assignments = assignments;
  p.clamp_kind = clamp_kind;
  return p;
}

void DefineScenario(py::module_& m) {
  py::class_<PyScenario>(m, "Scenario", "A driver description read from scenario TOML (see README, 'Scenario files').")
      .def(py::init(&rebuild_scenario), py::arg("text"), py::arg("name"), py::arg("models_dir") = "",
           py::arg("assignments") = std::vector<std::pair<std::string, double>>{}, py::arg("clamp_kind") = "",
           "Parse scenario TOML `text`; `name` is used in messages as the file name. `clamp_kind` ('' = the file's) "
           "and `assignments`, numeric keys (in their units as numeric_keys() lists them), are set after parsing.")
      .def(py::pickle(
          [](const PyScenario& p) { return py::make_tuple(p.text, p.name, p.models_dir, p.assignments, p.clamp_kind); },
          [](const py::tuple& t) {
            if (t.size() != 5) throw std::runtime_error("Scenario: pickled state of another version");
            return rebuild_scenario(t[0].cast<std::string>(), t[1].cast<std::string>(), t[2].cast<std::string>(),
                                    t[3].cast<std::vector<std::pair<std::string, double>>>(), t[4].cast<std::string>());
          }))
      .def("__repr__",
           [](const PyScenario& p) {
             std::string out = "<coilkick.Scenario '" + p.scenario.driver.name + "' from " + p.name + ": " +
                               drivers::to_string(p.scenario.driver.switch_.topology) + ", clamp " +
                               drivers::to_string(p.scenario.driver.clamp.kind);
             for (const auto& [k, v] : p.assignments) out += ", " + k + " = " + py::repr(py::float_(v)).cast<std::string>();
             return out + ">";
           })
      .def_readonly("text", &PyScenario::text, "The scenario's TOML text.")
      .def_readonly("source_name", &PyScenario::name, "File name used in messages.")
      .def_readonly("models_dir", &PyScenario::models_dir, "Models directory ('' = default).")
      .def_readonly("assignments", &PyScenario::assignments, "Numeric keys set after parsing, (key, value in the key's unit).")
      .def_property_readonly("name", [](const PyScenario& p) { return p.scenario.driver.name; }, "The scenario's name.")
      .def_property_readonly("topology", [](const PyScenario& p) { return drivers::to_string(p.scenario.driver.switch_.topology); })
      .def_property_readonly("clamp_kind", [](const PyScenario& p) { return drivers::to_string(p.scenario.driver.clamp.kind); })
      .def_property_readonly("clamp_parts", [](const PyScenario& p) { return drivers::describe_clamp_parts(p.scenario.driver.clamp); })
      .def_property_readonly("supply_voltage_V", [](const PyScenario& p) { return p.scenario.driver.supply.voltage_V; })
      .def_property_readonly("applicable_clamp_kinds", [](const PyScenario& p) {
            std::vector<std::string> out;
            for (auto k : scenario::applicable_clamp_kinds(p.scenario)) out.push_back(drivers::to_string(k));
            return out;
          }, "clamp kinds whose parts the scenario gives (and none)")
      .def(
          "with_clamp_kind",
          [](const PyScenario& p, const std::string& kind) {
            return rebuild_scenario(p.text, p.name, p.models_dir, p.assignments, kind);
          },
          py::arg("kind"), "A copy with another clamp kind (the parts the file gives).")
      .def_property_readonly(
          "switch_part", [](const PyScenario& p) { return p.scenario.driver.switch_.part; }, "The switch's catalogue part.")
      .def_property_readonly(
          "zener_part", [](const PyScenario& p) { return p.scenario.driver.clamp.zener_part; }, "The diode + Zener clamp's Zener part.")
      .def(
          "elements",
          [](const PyScenario& p) {
            const auto b = drivers::build_driver_network(p.scenario.driver, *p.parts);
            py::list out;
            for (const auto& e : b.network.elements()) {
              py::dict d;
              d["name"] = e->name();
              d["kind"] = e->kind();
              d["terminals"] = e->terminals();
              out.append(d);
            }
            for (const auto& s : b.network.voltage_sources()) {
              py::dict d;
              d["name"] = s.name;
              d["kind"] = "voltage source";
              d["terminals"] = std::vector<std::string>{s.node, "ground"};
              out.append(d);
            }
            // Every catalogue part the driver uses, once each.
            const auto& d = p.scenario.driver;
            std::vector<std::string> names;
            auto add = [&names](const std::string& n) {
              if (!n.empty() && std::find(names.begin(), names.end(), n) == names.end()) names.push_back(n);
            };
            add(d.coil.part);
            if (b.switch_part) add(b.switch_part->name);
            if (b.high_side) add(d.switch_.level_shifter_part);
            for (const auto* part : b.clamp_parts) add(part->name);
            add(d.supply.reverse_polarity_diode_part);
            for (const auto& x : d.extra_parts) add(x.part);
            py::list used;
            for (const auto& n : names) used.append(n);
            py::dict r;
            r["elements"] = out;
            r["parts"] = used;
            return r;
          },
          "The driver's network as built: every element (name, kind, terminals) and the catalogue parts of switch and clamp.")
      .def(
          "with_value",
          [](const PyScenario& p, const std::string& key, double value) {
            auto a = p.assignments;
            a.emplace_back(key, value);
            return rebuild_scenario(p.text, p.name, p.models_dir, a, p.clamp_kind);
          },
          py::arg("key"), py::arg("value"),
          "A copy with one numeric key set (value in the key's unit as numeric_keys() lists it: SI base units, temperatures in degC), e.g. "
          "with_value('clamp.zener.overrides.breakdown_voltage', 20.0).");
  m.def("numeric_keys", &scenario::numeric_keys, "Numeric scenario keys with their SI units.");
  m.def(
      "check_numeric_key",
      [](const PyScenario& p, const std::string& key) {
        scenario::Scenario copy = p.scenario;
        scenario::set_numeric_key(copy, key, 1.0, *p.parts);  // throws ScenarioError with the closest key
      },
      py::arg("scenario"), py::arg("key"), "Raises ScenarioError unless `key` is a numeric key (or part override) of the scenario.");
}

}  // namespace coilkick::python
