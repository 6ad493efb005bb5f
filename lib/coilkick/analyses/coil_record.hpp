#pragma once
// A coil record for models/coils from a fit to a bench capture (fit.hpp): the catalogue's own
// format (models/README.md), every value with its unit and source — "fitted to <capture>,
// <date> (± standard error)" for the fitted keys, the measured release current (as a release
// voltage at 20 °C) where the capture had a contact channel, and the scenario's value, marked as
// not fitted, for the rest.
#include <string>

#include "coilkick/analyses/fit.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

// `fitted` is the scenario with the fit's values set (fit.hpp's fitted_scenario); `name` the record's part
// name (letters, digits, '_' and '-'; std::invalid_argument otherwise).
std::string coil_record_toml(const scenario::Scenario& fitted, const CaptureFit& fit, const std::string& name,
                             const std::string& capture_file, const std::string& date);

}  // namespace coilkick::analyses
