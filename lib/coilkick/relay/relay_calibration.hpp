#pragma once
// Armature-model parameters from data-sheet-style values (IEC 61810-1 terms: operate voltage,
// release voltage, operate time, release time), and the model's own values of the same
// quantities so that a calibration reports how closely it meets each target.
//
// What is fixed and what is solved (fixed values: typical of small power relays and valves, from
// memory; they set the model's shape, the solved ones its scale):
//   fixed   residual gap 50 µm, pole area 20 mm², leakage 5 % of the closed inductance, the
//           contact spring carrying half the spring-force rise over the over-travel, viscous
//           damping at 0.2 of critical, stops giving 0.1 % of the over-travel of penetration under
//           the holding force at nominal voltage, damped at 0.7 of critical there;
//   solved  turns (closed inductance), spring preload (operate voltage at the open stop),
//           spring rates (release voltage at the closed stop), moving mass (release time) and
//           core reluctance (operate time, through the open-gap inductance and so the
//           pick-up delay) — the last two by nested one-dimensional root finding on runs of the
//           coil alone.
// Operate and release times are measured as data sheets state them: from applying the nominal
// voltage (removing it) to the contact making (breaking), bounce excluded. "Removing" means the
// coil is disconnected with no suppression part: the model discharges it into 19× its own
// resistance, a spike of about 20× the nominal voltage as from a switch breaking down.
#include <limits>
#include <string>
#include <vector>

#include "coilkick/relay/armature_coil.hpp"

namespace coilkick::relay {

struct RelayDatasheet {
  double nominal_voltage_V = 12.0;
  double coil_resistance_ohm = 400.0;  // at the temperature the data sheet values hold
  double closed_inductance_H = 0.5;    // coil inductance with the armature closed
  double operate_voltage_V = 8.4;      // static pick-up
  double release_voltage_V = 1.8;      // static drop-out
  double operate_time_s = 8e-3;
  double release_time_s = 3e-3;        // without suppression
  double contact_gap_m = 0.4e-3;       // open contact gap (armature travel beyond the over-travel)
  double over_travel_m = 0.1e-3;       // armature travel from contact touch to the closed stop
  double core_loss_resistance_ohm = std::numeric_limits<double>::infinity();
  // Throws std::invalid_argument naming the field ("relay: operate_time_s must be ...").
  void check() const;
};

struct CalibrationTarget {
  std::string name;  // e.g. "operate_voltage_V"
  double target = 0.0, achieved = 0.0;
  double relative_error() const { return (achieved - target) / target; }
};

struct RelayCalibration {
  ArmatureCoilParameters parameters;  // at the data sheet's coil resistance
  std::vector<CalibrationTarget> targets;
  double worst_relative_error() const;
};

// Throws std::invalid_argument for values no model of this shape can meet (naming them), and
// engine::SimulationError if a run fails.
RelayCalibration calibrate_relay(const RelayDatasheet& sheet);
// Same, remembered per data sheet (thread-safe): sweeps and tolerance runs calibrate once.
const RelayCalibration& calibrate_relay_cached(const RelayDatasheet& sheet);

// Static values of a model from its force balance.
double static_release_current_A(const ArmatureCoilParameters& p);  // at the closed stop
double static_operate_current_A(const ArmatureCoilParameters& p);  // the largest over the travel

// Runs of the coil alone on an ideal source. NaN if the contact never changes state within
// `limit_s`.
double operate_time_s(const ArmatureCoilParameters& p, double voltage_V, double limit_s = 1.0);
double release_time_s(const ArmatureCoilParameters& p, double voltage_V, double limit_s = 1.0);

}  // namespace coilkick::relay
