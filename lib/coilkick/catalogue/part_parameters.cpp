#include "coilkick/catalogue/part_parameters.hpp"

#include <stdexcept>

#include "coilkick/devices/parameter_fields.hpp"

namespace coilkick::catalogue {
namespace {

template <class P>
P build(const PartRecord& part, const std::vector<devices::ParameterField<P>>& fields, P p,
        const Overrides& overrides, void (*check)(const std::string&, const P&)) {
  const std::string owner = "part '" + part.name + "' (" + part.location() + ")";
  for (const auto& [key, entry] : part.parameters) {
    const auto& f = devices::find_field(fields, key, owner);
    if (entry.unit != f.unit) {
      throw CatalogueError(entry.file + ":" + std::to_string(entry.line) + ":" + std::to_string(entry.column) +
                           ": part '" + part.name + "': '" + key + "' has unit '" + entry.unit + "', expected '" +
                           f.unit + "'");
    }
    f.ref(p) = entry.value;
  }
  for (const auto& [key, value] : overrides) devices::find_field(fields, key, owner + " override").ref(p) = value;
  check(owner, p);
  return p;
}

void require_family(const PartRecord& part, std::initializer_list<const char*> allowed, const char* what) {
  for (const char* a : allowed) {
    if (part.family == a) return;
  }
  throw std::invalid_argument("part '" + part.name + "' is a " + part.family + ", not a " + what);
}

void check_darlington(const std::string& owner, const devices::DarlingtonParameters& p) {
  devices::check_darlington_parameters(owner, p);
}

}  // namespace

devices::DiodeParameters diode_parameters(const PartRecord& part, const Overrides& overrides) {
  require_family(part, {"diode", "zener", "tvs"}, "diode");
  return build(part, devices::diode_fields(), devices::DiodeParameters{}, overrides, &devices::check_diode_parameters);
}

devices::BjtParameters bjt_parameters(const PartRecord& part, const Overrides& overrides) {
  require_family(part, {"npn", "pnp"}, "bipolar transistor");
  devices::BjtParameters p;
  p.polarity = part.family == "npn" ? devices::Polarity::n : devices::Polarity::p;
  return build(part, devices::bjt_fields(), p, overrides, &devices::check_bjt_parameters);
}

devices::MosfetParameters mosfet_parameters(const PartRecord& part, const Overrides& overrides) {
  require_family(part, {"nmos", "pmos"}, "MOSFET");
  devices::MosfetParameters p;
  p.polarity = part.family == "nmos" ? devices::Polarity::n : devices::Polarity::p;
  return build(part, devices::mosfet_fields(), p, overrides, &devices::check_mosfet_parameters);
}

devices::DarlingtonParameters darlington_parameters(const PartRecord& part, const Overrides& overrides) {
  require_family(part, {"darlington_npn"}, "Darlington pair");
  return build(part, devices::darlington_fields(), devices::DarlingtonParameters{}, overrides, &check_darlington);
}

namespace {
template <class P>
std::vector<std::pair<std::string, std::string>> keys_of(const std::vector<devices::ParameterField<P>>& fields) {
  std::vector<std::pair<std::string, std::string>> out;
  for (const auto& f : fields) out.emplace_back(f.key, f.unit);
  return out;
}
}  // namespace

std::vector<std::pair<std::string, std::string>> parameter_keys(const std::string& family) {
  if (family == "diode" || family == "zener" || family == "tvs") return keys_of(devices::diode_fields());
  if (family == "npn" || family == "pnp") return keys_of(devices::bjt_fields());
  if (family == "nmos" || family == "pmos") return keys_of(devices::mosfet_fields());
  if (family == "darlington_npn") return keys_of(devices::darlington_fields());
  if (family == "coil") {
    return {{"resistance_at_20C", "ohm"}, {"inductance", "H"},        {"winding_capacitance", "F"},
            {"core_loss_resistance", "ohm"}, {"nominal_voltage", "V"}, {"operate_voltage", "V"},
            {"release_voltage", "V"},     {"operate_time", "s"},       {"release_time", "s"},
            {"contact_gap", "m"},         {"over_travel", "m"}};
  }
  throw std::invalid_argument("unknown part family '" + family + "'");
}

}  // namespace coilkick::catalogue
