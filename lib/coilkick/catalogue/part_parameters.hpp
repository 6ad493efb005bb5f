#pragma once
// Device parameter sets from catalogue records, with optional overrides (key → value in the
// field's unit), e.g. from a scenario file's [switch.overrides].
#include <map>
#include <string>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/darlington.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/mosfet.hpp"

namespace coilkick::catalogue {

using Overrides = std::map<std::string, double>;

// Each throws std::invalid_argument naming the part (and key) if the record is of another family
// or an override key is unknown; the resulting set is range-checked.
devices::DiodeParameters diode_parameters(const PartRecord& part, const Overrides& overrides = {});
devices::BjtParameters bjt_parameters(const PartRecord& part, const Overrides& overrides = {});
devices::MosfetParameters mosfet_parameters(const PartRecord& part, const Overrides& overrides = {});
devices::DarlingtonParameters darlington_parameters(const PartRecord& part, const Overrides& overrides = {});

// Keys and units a family accepts as parameters (for validation and listings).
std::vector<std::pair<std::string, std::string>> parameter_keys(const std::string& family);

}  // namespace coilkick::catalogue
