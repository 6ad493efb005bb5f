// The part catalogue.
#include <pybind11/stl.h>

#include <map>
#include <mutex>

#include "bindings.hpp"

namespace py = pybind11;

namespace coilkick::python {

std::shared_ptr<const catalogue::Catalogue> catalogue_for(const std::string& models_dir) {
  // One catalogue per models directory and process: loading validates every file.
  static std::mutex mutex;
  static std::map<std::string, std::shared_ptr<const catalogue::Catalogue>> cache;
  const std::string dir = models_dir.empty() ? catalogue::default_models_directory() : models_dir;
  std::lock_guard<std::mutex> lock(mutex);
  auto& slot = cache[dir];
  if (!slot) {
    auto c = std::make_shared<catalogue::Catalogue>();
    c->load_directory(dir);
    slot = c;
  }
  return slot;
}

void DefineCatalogue(py::module_& m) {
  m.def("set_installed_models_directory", &catalogue::set_installed_models_directory, py::arg("path"),
        "Used by the package when it finds its bundled models beside itself.");
  m.def("default_models_directory", &catalogue::default_models_directory,
        "The models directory used when none is given ($COILKICK_MODELS, else the bundled models/).");
  m.def("part_names", [](const std::string& models_dir, const std::string& family) { return catalogue_for(models_dir)->names(family); },
        py::arg("models_dir") = "", py::arg("family") = "",
        "Names of the catalogue's parts, optionally of one family (diode, zener, tvs, npn, pnp, nmos, pmos, darlington_npn, coil).");
  m.def(
      "part_info",
      [](const std::string& name, const std::string& models_dir) {
        const auto& p = catalogue_for(models_dir)->part(name);
        py::dict params, ratings;
        for (const auto& [k, e] : p.parameters) params[py::str(k)] = py::make_tuple(e.value, e.unit, e.source);
        for (const auto& [k, e] : p.ratings) ratings[py::str(k)] = py::make_tuple(e.value, e.unit, e.source);
        py::dict d;
        d["name"] = p.name;
        d["family"] = p.family;
        d["description"] = p.description;
        d["file"] = p.location();
        d["parameters"] = params;
        d["ratings"] = ratings;
        return d;
      },
      py::arg("name"), py::arg("models_dir") = "",
      "One part as a dict: family, description, file, parameters and ratings as {key: (value, SI unit, source)}.");
}

}  // namespace coilkick::python
