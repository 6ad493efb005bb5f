#pragma once
// Builds the engine network of a driver: supply, logic output, switch stage (with level shifter
// and pull-up for high-side switches), coil with winding capacitance and core loss, board stray
// capacitance, and the clamp. Node and element names are fixed so that metrics and reports can
// find them:
//   nodes: "supply", "logic", "logic_out", "base" (switch base or gate), "switch" (the switch's
//          collector/drain, i.e. the coil's switched end), "clamp_mid", "snubber_mid", "common_pin";
//          a further channel's (DriverSpec::channels) the same behind "<name>." ("fan.switch");
//          with a cable (DriverSpec::cable) "coil_in"/"coil_out", the coil's terminals at its far end;
//   elements: "coil" (a fixed coil, or with the armature model an armature coil with states
//          "coil.gap" and "coil.velocity"), "switch" (or "switch.input"/"switch.output" for a Darlington),
//          "base_resistor", "clamp_diode", "clamp_zener", "clamp_resistor", "clamp_tvs",
//          "snubber_resistor", "snubber_capacitor", "level_shifter", "pullup_resistor", "cable" ...
#include <optional>
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/engine/network.hpp"

namespace coilkick::drivers {

struct BuiltDriver {
  engine::Network network;  // the whole board (empty in the views of further channels)
  // This channel's own names are `local(name)`: the first channel's plain, a further channel's
  // behind "<name>." (DriverSpec::channels): nodes "fan.switch", elements "fan.coil", state
  // "fan.coil.current", the transient's events "fan.peak".
  std::string prefix;
  std::string local(const std::string& name) const;
  bool high_side = false;
  bool mosfet = false;
  // The coil's terminals: its current enters at coil_in_node. On the board "supply"/"switch"
  // (low side) or "switch"/ground (high side); at a cable's far end "coil_in"/"coil_out".
  std::string coil_in_node, coil_out_node;
  // Switch voltage = v(switch_high_node) − v(switch_low_node).
  std::string switch_high_node, switch_low_node;
  std::vector<std::string> switch_elements;  // their heat is the switch's energy
  std::vector<std::string> clamp_elements;   // their heat is the clamp's energy
  std::string clamp_current_element;         // its terminal-0 current is the clamp current
  std::string switch_control_terminal_element;  // element whose terminal 1 is the switch's base/gate
  const catalogue::PartRecord* switch_part = nullptr;
  std::vector<const catalogue::PartRecord*> clamp_parts;  // for the rating checks
  std::vector<std::string> clamp_part_elements;           // the element of each of clamp_parts
  std::vector<std::string> extra_elements;                // the extra parts (DriverSpec::extra_parts), by name
  double coil_resistance_ohm = 0.0;
  // With the armature model: the calibration (the parameters at the data sheet's resistance)
  // and the element's parameters as built (hot winding resistance). Null/empty otherwise.
  const relay::RelayCalibration* relay_calibration = nullptr;
  std::optional<relay::ArmatureCoilParameters> armature;
  // The further channels (their views: names, parts; no network), in DriverSpec::channels order.
  std::vector<BuiltDriver> channels;
  // The common clamp pin's Zener ("common_zener" between "supply" and "common_pin"), if any.
  std::string common_clamp_element;
  const catalogue::PartRecord* common_clamp_part = nullptr;
  // A board with a cable: the coils' shared common core ("cable_common_core", from the rail or
  // ground to "cable_common", where every channel's line "<name>.cable" starts), if any.
  std::string cable_common_core_element;
};

// Where a common_pin clamp's diode ends: "common_pin" with a common Zener, else the rail.
std::string common_pin_node(const DriverSpec& s);

// Throws std::invalid_argument naming the field for an impossible combination (e.g. an NPN
// part on a MOSFET topology), and the catalogue's errors for unknown parts.
BuiltDriver build_driver_network(const DriverSpec& spec, const catalogue::Catalogue& parts);


}  // namespace coilkick::drivers
