#pragma once
// The part catalogue: data files in models/ (TOML) describing diodes, Zener and TVS diodes,
// transistors and coils by generic class names of our own, every value with its unit and source.
//
// File format (see models/README.md):
//   [defaults]                 optional; family, parameters and ratings shared by every part
//   [[part]]                   one per part: name, family, description
//   [part.parameters]          model parameters:  key = { value = 1e-14, unit = "A", source = "..." }
//   [part.ratings]             limits a designer checks against, same form
// Keys are the plain names of devices/parameter_fields.hpp; the unit must be the field's SI unit
// exactly (values in base units: "A", "V", "ohm", "F", "s" ...). Every problem is reported as
// CatalogueError "file:line:column: what is wrong".
#include <map>
#include <stdexcept>
#include <string>
#include <vector>

namespace coilkick::catalogue {

class CatalogueError : public std::invalid_argument {
 public:
  explicit CatalogueError(const std::string& what) : std::invalid_argument(what) {}
};

struct Entry {
  double value = 0.0;
  std::string unit;
  std::string source;
  std::string file;
  int line = 0, column = 0;
};

struct PartRecord {
  std::string name;
  std::string family;  // diode | zener | tvs | npn | pnp | nmos | pmos | darlington_npn | coil
  std::string description;
  std::string file;
  int line = 0, column = 0;
  std::map<std::string, Entry> parameters;
  std::map<std::string, Entry> ratings;

  std::string location() const;  // "file:line:column"
  bool has_rating(const std::string& key) const { return ratings.count(key) > 0; }
  double rating(const std::string& key) const;        // throws naming the part and key
  bool has_parameter(const std::string& key) const { return parameters.count(key) > 0; }
  double parameter(const std::string& key) const;     // throws naming the part and key
};

// The unit of each rating key of a family, and the known families.
const std::vector<std::pair<std::string, std::string>>& rating_keys(const std::string& family);
const std::vector<std::string>& families();

class Catalogue {
 public:
  // Reads one file; every part in it is validated (keys, units, values, and the resulting
  // device parameters). Names must be unique across everything loaded.
  void load_file(const std::string& path);
  // Reads every *.toml below dir/parts and dir/coils.
  void load_directory(const std::string& models_dir);

  const PartRecord& part(const std::string& name) const;  // throws with the closest name
  bool has_part(const std::string& name) const { return parts_.count(name) > 0; }
  std::vector<std::string> names(const std::string& family = "") const;
  std::size_t size() const { return parts_.size(); }

 private:
  std::map<std::string, PartRecord> parts_;
};

// The models directory: $COILKICK_MODELS if set; else the one the program found beside itself
// (set_installed_models_directory: an installed command or Python package, wherever it was put);
// else the source tree's models/ when run from a build tree; else share/coilkick/models of the
// configured install prefix.
std::string default_models_directory();
// Called by a host (the command, the Python package) that found its bundled models next to itself.
void set_installed_models_directory(const std::string& path);
Catalogue load_default_catalogue();

}  // namespace coilkick::catalogue
