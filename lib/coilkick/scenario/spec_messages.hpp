#pragma once
// The driver checks' messages in the file's words, and the scenario key each is about, so that a
// message of check_driver_spec or the network builder reaches the user as
// "file:line:column: key 'coil.inductance': coil.inductance must be > 0".
#include <set>
#include <string>

#include "coilkick/scenario/scenario.hpp"

namespace coilkick::scenario {

// The key a driver-check message is about ("" when none fits): its field, a key it starts with,
// a part override it names, or the last of several fields in the file. `seen`: keys the file gives.
std::string key_of_message(const std::string& msg, const Scenario& s, const std::set<std::string>& seen);

}  // namespace coilkick::scenario
