#pragma once
// A driver fitted to a bench capture of its switch-off or switch-on: the chosen numeric scenario
// keys (coil.inductance, coil.resistance, coil.core_loss_resistance ...) adjusted by least
// squares (least_squares.hpp) so that the normal engine's coil current matches the capture's,
// each residual a run of the whole switch-off (switch_off.hpp) or switch-on (switch_on.hpp).
// Which edge: the capture's switch voltage rises from its first value (switch-off) or falls
// (switch-on), or its drive channel falls or rises. Times: the capture's zero is its edge — the
// drive's where it has a drive channel, else the switch voltage's (capture.hpp) — and the model's
// the same point of its own drive or switch voltage; the shift between the two is fitted with
// the keys (an edge found on a scope's samples is only as sharp as their spacing). Keys whose standard error is not below their value
// are reported as undetermined.
#include <functional>
#include <string>
#include <vector>

#include "coilkick/analyses/armature_motion.hpp"
#include "coilkick/analyses/least_squares.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/scenario/capture.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

enum class CaptureEdge { switch_off, switch_on };
const char* to_string(CaptureEdge e);
// Which edge a capture's time zero and the model's are at: the switch voltage's (half way from
// its first value to the value farthest from it), or the drive's (half way across its edge; the
// model's drive is a straight ramp, so half its fall or rise time after its start).
enum class EdgeAlignment { switch_voltage, drive };
const char* to_string(EdgeAlignment a);

// From the drive channel where the capture has one (it falls to switch off), else from the switch
// voltage (it rises at switch-off). Throws std::invalid_argument when neither is there or moves.
CaptureEdge capture_edge(const scenario::Capture& c);
// The drive where the capture has one, else the switch voltage.
EdgeAlignment capture_alignment(const scenario::Capture& c);
// The capture's edge by its alignment (scenario::edge_time_s); NaN where there is none.
double capture_edge_time_s(const scenario::Capture& c);

// What the model shows at times after its own edge (switch voltage or drive, the capture's convention):
// the current through the coil's terminals (a shunt in series with it: the winding's current and
// the core loss's; the winding capacitance's charging current, a spike of a fraction of a
// microsecond at the edge, is left out) and the switch voltage;
// samples before its run's start read the start (the steady state before the edge), after its
// end the end (the run stops once the coil's energy is spent; a switch-on runs to the last time).
struct ModelTrace {
  std::vector<double> current_A;
  std::vector<double> voltage_V;
  double edge_time_s = 0.0;  // the model's edge (as aligned) after the start of its drive edge
  double make_time_s = 0.0;  // switch-on with the armature model: contact make after the drive edge (NaN otherwise)
};
ModelTrace model_trace(const scenario::Scenario& s, const catalogue::Catalogue& parts, CaptureEdge edge,
                       const std::vector<double>& times_after_edge_s, EdgeAlignment alignment = EdgeAlignment::switch_voltage);

// The keys fitted when none are named: coil.inductance with, at switch-off, the core loss (where
// the scenario gives one) and, at switch-on, the coil resistance; with the armature model also
// the data-sheet time of that edge (relay.release_time / relay.operate_time) where one is given.
std::vector<std::string> default_fit_keys(const scenario::Scenario& s, CaptureEdge edge);

// The capture's noise where none is given: the standard deviation of its current before its
// edge (capture_edge_time_s; a steady current there), from at least 16 samples; NaN where there are fewer.
double current_noise_before_edge_A(const scenario::Capture& c);

struct CaptureFit {
  CaptureEdge edge = CaptureEdge::switch_off;
  EdgeAlignment alignment = EdgeAlignment::switch_voltage;
  std::vector<std::string> keys;
  std::vector<double> start_values;      // SI units of each key
  LeastSquaresResult result;              // parameters and standard errors in the keys' SI units, then the time shift
  double current_noise_A = 0.0;           // the weights' σ
  double time_shift_s = 0.0;              // fitted shift of the capture's clock against the model's edge
  double time_shift_error_s = 0.0;
  std::vector<std::string> undetermined;  // keys whose standard error is not below their value (or NaN)
  std::vector<double> time_after_edge_s;  // the capture's times after its own edge (as aligned)
  std::vector<double> model_current_A;    // at those times, at the optimum
  ArmatureMotion measured_motion;         // switch-on: the dip in the capture's current
  ArmatureMotion model_motion;            // switch-on: the same reading of the fitted model's current
  double model_make_time_s = 0.0;         // switch-on with the armature model: contact make (NaN otherwise)
  // Switch-off with a contact channel: the coil current where the contact signal crosses half way
  // from its first to its last value (the measured release current), and when; NaN otherwise.
  double measured_release_current_A = 0.0;
  double measured_contact_time_s = 0.0;
};

struct FitOptions {
  double current_noise_A = 0.0;  // 0: current_noise_before_edge_A
  // Called after each accepted iteration with its number and the weighted sum of squares.
  std::function<void(int, double)> on_iteration;
};

// Throws ScenarioError for unknown keys, std::invalid_argument for a capture without a current or
// a voltage channel or an edge, with columns of different lengths or time that does not increase,
// or without a noise estimate, engine::SimulationError for a run that fails.
CaptureFit fit_capture(const scenario::Scenario& s, const catalogue::Catalogue& parts, const scenario::Capture& capture,
                       const std::vector<std::string>& keys, const FitOptions& options = {});

// The scenario with the fit's values of its keys (with the armature model, a fitted coil
// resistance or inductance is also the relay data sheet the magnet is calibrated from).
scenario::Scenario fitted_scenario(const scenario::Scenario& s, const catalogue::Catalogue& parts, const CaptureFit& fit);

}  // namespace coilkick::analyses
