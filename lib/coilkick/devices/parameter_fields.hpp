#pragma once
// The named parameters of each device family: the key used in part files and overrides
// (plain words, no unit suffix), its SI unit, and where it lives in the parameter struct.
// One table per family, so that loading, overriding and listing share a single definition.
#include <string>
#include <vector>

#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/darlington.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/mosfet.hpp"

namespace coilkick::devices {

template <class P>
struct ParameterField {
  const char* key;   // e.g. "saturation_current"
  const char* unit;  // e.g. "A"; "1" for dimensionless
  double& (*ref)(P&);
};

const std::vector<ParameterField<DiodeParameters>>& diode_fields();
const std::vector<ParameterField<BjtParameters>>& bjt_fields();
const std::vector<ParameterField<MosfetParameters>>& mosfet_fields();
const std::vector<ParameterField<DarlingtonParameters>>& darlington_fields();

// Finds a field by key; throws std::invalid_argument "<owner>: unknown parameter 'x' (did you
// mean 'y'?)" otherwise.
template <class P>
const ParameterField<P>& find_field(const std::vector<ParameterField<P>>& fields, const std::string& key,
                                    const std::string& owner);

// Sets parameter `key` of p to value (in the field's unit).
template <class P>
void set_parameter(P& p, const std::vector<ParameterField<P>>& fields, const std::string& key, double value,
                   const std::string& owner) {
  find_field(fields, key, owner).ref(p) = value;
}

}  // namespace coilkick::devices
