#pragma once
// The Python module coilkick._core: one Define* function per area (errors, catalogue,
// scenarios, results, analyses, relay calibration), called from module.cpp. The pure-Python package coilkick
// (bindings/python/coilkick) wraps these into the public API.
#include <pybind11/pybind11.h>

#include <functional>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::python {

// A scenario as Python holds it: the parsed description plus what is needed to rebuild it in
// another process (its TOML text, name, models directory and the numeric keys set since).
struct PyScenario {
  scenario::Scenario scenario;
  std::string text;
  std::string name;
  std::string models_dir;
  std::shared_ptr<const catalogue::Catalogue> parts;
  std::vector<std::pair<std::string, double>> assignments;
  // A clamp kind set after parsing (with_clamp_kind), "" = the file's. Part of the recipe a
  // scenario is rebuilt from (with_value, the executors' workers), so no copy loses it.
  std::string clamp_kind;
};

std::shared_ptr<const catalogue::Catalogue> catalogue_for(const std::string& models_dir);
PyScenario rebuild_scenario(const std::string& text, const std::string& name, const std::string& models_dir,
                            const std::vector<std::pair<std::string, double>>& assignments,
                            const std::string& clamp_kind);

// Runs `work` (C++ only, no Python objects) with the GIL released; Ctrl-C stops it within a
// step and raises KeyboardInterrupt (bind_interrupt.cpp). Its exceptions reach Python as usual.
void run_interruptibly(const std::function<void()>& work);

void DefineErrors(pybind11::module_& m);
void DefineInterrupt(pybind11::module_& m);
void DefineCatalogue(pybind11::module_& m);
void DefineScenario(pybind11::module_& m);
void DefineResults(pybind11::module_& m);
void DefineAnalyses(pybind11::module_& m);
void DefineRelay(pybind11::module_& m);
void DefineLeastSquares(pybind11::module_& m);
void DefineFit(pybind11::module_& m);

}  // namespace coilkick::python
