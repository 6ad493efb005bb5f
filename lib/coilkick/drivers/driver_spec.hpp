#pragma once
// What a designer describes: supply, logic drive, switch topology and part, coil, clamp, and
// how to analyse it. All quantities in SI units, named with their unit. Parts are catalogue
// names (models/) with optional per-parameter overrides.
#include <limits>
#include <map>
#include <string>
#include <vector>

#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/devices/model_level.hpp"
#include "coilkick/relay/relay_calibration.hpp"

namespace coilkick::drivers {

using catalogue::Overrides;

// The supply: an ideal source of voltage_V, optionally behind a source resistance and
// inductance and a reverse-polarity diode, feeding the board's rail ("supply" node), which may
// carry a bulk capacitor with its ESR. All zero / empty: the rail is the ideal source itself.
struct SupplySpec {
  double voltage_V = 24.0;
  double tolerance = 0.0;  // relative, e.g. 0.1 for ±10 % (used by tolerance analysis)
  double source_resistance_ohm = 0.0;
  double source_inductance_H = 0.0;
  double bulk_capacitance_F = 0.0;
  double bulk_capacitor_esr_ohm = 0.0;
  std::string reverse_polarity_diode_part;  // catalogue diode in series with the rail; empty: none
  Overrides reverse_polarity_diode_overrides;
  // The rail is the ideal source itself (a bulk capacitor across it changes nothing).
  bool rail_is_ideal() const {
    return source_resistance_ohm == 0.0 && source_inductance_H == 0.0 && reverse_polarity_diode_part.empty();
  }
};

// Field wiring: a two-core cable between the board's coil terminals and the coil, as a line of
// characteristic impedance √(L′/C′) and delay length·√(L′·C′) with its loop resistance
// (engine/transmission_line.hpp). length_m = 0: the coil sits on the board. Defaults: a common
// 2 × 0.75 mm² PVC control cable — loop resistance twice IEC 60228's class-5 conductor limit at
// 20 °C (26.0 Ω/km, Table 3, from memory); L′ and C′ typical of the class, from memory, and
// consistent with the two-wire line's closed forms (docs/derivations.md, "A cable by its
// travelling waves").
struct CableSpec {
  double length_m = 0.0;
  double loop_resistance_per_metre_ohm_per_m = 0.052;
  double inductance_per_metre_H_per_m = 0.55e-6;
  double capacitance_per_metre_F_per_m = 80e-12;
  // The insulation's loss tangent near the pair's quarter-wave frequency (0.05: typical of
  // plasticised PVC cable insulation near 1 MHz, from memory; such compounds span ~0.02–0.1).
  double insulation_loss_tangent = 0.05;
  // The cable's loss of high frequencies as a first-order low-pass on each arriving wave, its
  // time constant this fraction of the delay (0 < f < 1). NaN (the default): from the
  // conductors' skin effect and insulation_loss_tangent (drivers/cable_loss.hpp). Halving it
  // moves the release time by < 0.1 %, the switch's and the coil end's peaks by < 1 %
  // (tests/drivers/test_cable.cpp).
  double high_frequency_loss_fraction = std::numeric_limits<double>::quiet_NaN();
  bool present() const { return length_m > 0.0; }
  double characteristic_impedance_ohm() const;
  double delay_s() const;
  double loop_resistance_ohm() const { return loop_resistance_per_metre_ohm_per_m * length_m; }
};

struct DriveSpec {
  double high_level_V = 3.3;            // logic output high level
  double output_resistance_ohm = 50.0;  // logic output resistance
  double rise_time_s = 10e-9;
  double fall_time_s = 10e-9;
  double switch_off_at_s = 1e-3;  // start of the switch-off edge; the run starts in the on-state at 0 (a later edge: run_time_origin.hpp)
  // Optional repetition (for clamp_average_power_W): period of the on/off cycle; 0 = single.
  double period_s = 0.0;
};

// Peak-and-hold drive: full drive to pull the armature in (for pull_in_time_s, or until the
// coil current reaches pull_in_current_A), then PWM of the same drive at pwm_frequency_Hz with
// an on-fraction pwm_duty — or the duty that holds average_current_A — until the final
// switch-off, which then starts from the hold's periodic steady state at the end of an on-time.
// pwm_frequency_Hz = 0: no hold (full drive until the switch-off).
struct HoldSpec {
  double pull_in_time_s = std::numeric_limits<double>::quiet_NaN();
  double pull_in_current_A = std::numeric_limits<double>::quiet_NaN();
  double pwm_frequency_Hz = 0.0;
  double pwm_duty = std::numeric_limits<double>::quiet_NaN();
  double average_current_A = std::numeric_limits<double>::quiet_NaN();
  // 0: the PWM's periodic steady state; n > 0: n periods simulated one by one from the end of
  // the pull-in, the final switch-off ending the last (a plain repetition, RepeatSpec).
  int cycles = 0;
  bool present() const { return pwm_frequency_Hz > 0.0; }
};

// Plain repeated switching: on for on_time_s in every period_s, count times from the off-state;
// the final switch-off ends the last on-time. Run as a hold without pull-in (HoldSpec::cycles).
constexpr int kMostRepeatCount = 100000;
struct RepeatSpec {
  double period_s = 0.0;  // 0: no repetition
  double on_time_s = std::numeric_limits<double>::quiet_NaN();
  int count = 0;
  bool present() const { return period_s > 0.0; }
};

enum class Topology { low_side_npn, low_side_nmos, low_side_darlington, high_side_pnp, high_side_pmos };
Topology parse_topology(const std::string& word);
std::string to_string(Topology t);
const std::vector<std::string>& topology_names();

struct SwitchSpec {
  Topology topology = Topology::low_side_npn;
  std::string part = "npn_small_signal_40v";
  Overrides overrides;
  double base_resistor_ohm = 1e3;  // base or gate resistor of the switch (from the logic, or
                                   // from the level shifter for high-side switches)
  double pullup_resistor_ohm = 10e3;  // high side: base–emitter / gate–source pull-up
  // High side: the NPN level shifter and its base resistor from the logic output.
  std::string level_shifter_part = "npn_small_signal_40v";
  Overrides level_shifter_overrides;
  double level_shifter_base_resistor_ohm = 4.7e3;
  double board_stray_capacitance_F = 10e-12;  // switch node to ground
};

struct CoilSpec {
  std::string part;  // the catalogue coil the values came from ("" if given directly)
  double resistance_at_20C_ohm = 48.0;
  double temperature_C = 20.0;
  double copper_temperature_coefficient_per_K = 0.00393;  // IEC 60028
  double inductance_H = 0.35;
  double winding_capacitance_F = 0.0;
  double core_loss_resistance_ohm = std::numeric_limits<double>::infinity();
  // Release (drop-out) threshold: current, or voltage over the hot resistance. NaN: not given.
  double release_current_A = std::numeric_limits<double>::quiet_NaN();
  double release_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double operate_current_A = std::numeric_limits<double>::quiet_NaN();
  double operate_voltage_V = std::numeric_limits<double>::quiet_NaN();
};

// The relay armature model (relay/armature_coil.hpp), calibrated from data-sheet values
// (relay/relay_calibration.hpp). Off: the coil is a fixed inductance and only the current-based
// release time is reported. NaN fields are taken from the coil (resistance at 20 °C, inductance
// as the closed-armature inductance, operate and release voltages) or the supply (nominal
// voltage). `freeze_relay_datasheet` copies in the values that tolerance runs vary (supply
// voltage, coil resistance, inductance), so that those runs keep the armature calibrated from the
// nominal data: a relay with a hotter or higher-resistance winding has the same magnet and springs.
struct RelaySpec {
  bool armature_model = false;
  double nominal_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double resistance_at_20C_ohm = std::numeric_limits<double>::quiet_NaN();
  double closed_inductance_H = std::numeric_limits<double>::quiet_NaN();
  double operate_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double release_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double operate_time_s = std::numeric_limits<double>::quiet_NaN();  // data sheet
  double release_time_s = std::numeric_limits<double>::quiet_NaN();  // data sheet, without suppression
  double contact_gap_m = 0.4e-3;   // typical of small power relays, from memory
  double over_travel_m = 0.1e-3;   // typical of small power relays, from memory
};

enum class ClampKind {
  none, diode, diode_zener, diode_resistor, rc_across_coil, rc_across_switch, tvs_across_switch, active_clamp,
  common_pin  // a diode from the switched end to the board's common clamp pin (CommonClampSpec)
};
ClampKind parse_clamp_kind(const std::string& word);
std::string to_string(ClampKind k);
// The clamps a comparison tries: every kind but common_pin (the board's wiring, not one channel's choice).
const std::vector<ClampKind>& all_clamp_kinds();

struct ClampSpec {
  ClampKind kind = ClampKind::diode;
  std::string diode_part = "rectifier_1a";
  Overrides diode_overrides;
  std::string zener_part = "zener_500mw_12v";  // diode_zener: its voltage adds to the supply
  Overrides zener_overrides;
  std::string active_clamp_zener_part = "zener_500mw_33v";  // active_clamp: measured from ground
  Overrides active_clamp_zener_overrides;
  std::string tvs_part = "tvs_400w_33v";
  Overrides tvs_overrides;
  double resistor_ohm = 100.0;             // diode_resistor
  double snubber_resistance_ohm = 100.0;   // rc_across_coil / rc_across_switch
  double snubber_capacitance_F = 100e-9;
  bool add_rc_snubber_across_coil = false; // combination: this clamp plus an RC across the coil
};

struct AnalysisSpec {
  devices::ModelLevel model_level = devices::ModelLevel::physical;
  double device_temperature_C = 25.0;
  double stop_time_s = 0.0;   // 0: automatic (switch-off + enough for the decay)
  bool stop_when_decayed = true;  // end once the coil current is below half the lowest threshold
  double relative_tolerance = 1e-6;
  // A node near 0 V (a base when off, a logic output low) is judged against the scale of a 10 V
  // node at the relative tolerance, not against a tenth of it (README "Speed": 10–20 % fewer
  // instructions over the bundled scenarios, every metric where it was against a tight run).
  double voltage_tolerance_V = 1e-5;
  double current_tolerance_A = 1e-9;
  double switch_voltage_derating = 0.8;  // keep the peak below 80 % of the rating (common practice)
  double logic_pin_current_limit_A = 20e-3;
  double energy_balance_limit = 1e-3;    // a run above this relative error is flagged inaccurate
  double maximum_wall_time_s = 60.0;
};

// A part the topologies lack (a gate–source Zener, a speed-up capacitor, an emitter resistor, a
// second coil ...) between named nodes: the builder's (driver_network.hpp lists them) or new ones,
// which any other name creates (a new node must join at least two terminals).
enum class ExtraElement { resistor, capacitor, inductor, part };
ExtraElement parse_extra_element(const std::string& word);
std::string to_string(ExtraElement e);

struct ExtraPart {
  std::string name;  // element name in the network, unique
  ExtraElement element = ExtraElement::resistor;
  // resistor, capacitor, inductor, diode/Zener/TVS (anode, cathode): 2 nodes; a transistor
  // (collector or drain, base or gate, emitter or source): 3.
  std::vector<std::string> nodes;
  double value = std::numeric_limits<double>::quiet_NaN();  // ohm, F or H by element
  double series_resistance_ohm = 0.0;                        // inductor: its winding resistance
  std::string part;                                          // element "part": catalogue name
  Overrides overrides;
};

// The board's common clamp pin, as on a driver array: every channel whose clamp is `common_pin`
// has its diode from its switched end to this pin, and the pin goes to the rail through one
// shared Zener (or TVS) — or straight to the rail without one (plain flyback diodes). Low-side
// channels only.
struct CommonClampSpec {
  std::string zener_part;  // catalogue Zener or TVS, cathode at the pin; empty: the pin is the rail
  Overrides zener_overrides;
};

// One more coil on the same board (DriverSpec::channels): its own drive edge, switch, coil and
// clamp, sharing the supply (and its impedance and bulk capacitor) and the common clamp pin with
// the top-level channel. Its fields start as the top-level channel's and the scenario replaces
// what it names. Its nodes and elements are the top-level ones' names behind "<name>."
// ("fan.switch", "fan.coil").
struct ChannelSpec {
  std::string name;
  DriveSpec drive;
  SwitchSpec switch_;
  CoilSpec coil;
  ClampSpec clamp;
};

struct DriverSpec {
  std::string name = "driver";
  SupplySpec supply;
  CableSpec cable;
  DriveSpec drive;
  SwitchSpec switch_;
  CoilSpec coil;
  ClampSpec clamp;
  RelaySpec relay;
  AnalysisSpec analysis;
  std::vector<ExtraPart> extra_parts;
  // Further channels on the board; the top-level drive/switch/coil/clamp are the first channel.
  std::vector<ChannelSpec> channels;
  CommonClampSpec common_clamp;
  HoldSpec hold;
  RepeatSpec repeat;
  // A hold or a repetition: the drive before the final switch-off is periodic (drivers/hold.hpp).
  bool has_periodic_drive() const { return hold.present() || repeat.present(); }
  // The hold, or the repetition as a hold without pull-in that runs `count` periods.
  HoldSpec periodic_drive() const;
};

// Channel k of the board (0: the top-level one) as a driver of its own: the top-level spec with
// that channel's drive, switch, coil and clamp, and no further channels.
DriverSpec channel_driver_spec(const DriverSpec& s, std::size_t k);
// How reports name a channel: its name, "first" for the top-level one (whose name is empty).
inline std::string channel_label(const std::string& name) { return name.empty() ? "first" : name; }
// The further channels' names, in order.
std::vector<std::string> further_channel_names(const DriverSpec& s);
// Some channel's clamp is common_pin (the common Zener is built only then).
bool uses_common_pin(const DriverSpec& s);
// The first channel's switch-off edge to start, and the time every channel's edge has ended.
double first_edge_s(const DriverSpec& s);
double last_edge_end_s(const DriverSpec& s);

// Throws std::invalid_argument naming the field (e.g. "coil.inductance_H must be > 0"; in a
// further channel "channel 'fan': coil.inductance_H ...").
void check_driver_spec(const DriverSpec& s);

// Hot-coil resistance (IEC 60028) and the release current (from current or voltage).
double coil_resistance_ohm(const CoilSpec& c);
double release_current_A(const CoilSpec& c);  // NaN if neither is given

// Coil values from a catalogue coil record (resistance at 20 °C, inductance, winding
// capacitance, core loss, operate and release voltages where given).
CoilSpec coil_spec_from_part(const catalogue::PartRecord& coil);
// Relay data from a coil record (nominal voltage, operate and release times, contact gap,
// over-travel where given); the armature model stays off.
RelaySpec relay_spec_from_part(const catalogue::PartRecord& coil);

// The calibration input of the armature model (fields of RelaySpec, NaN ones from the coil and
// supply). Throws std::invalid_argument naming the missing field ("relay: operate_time_s ...").
relay::RelayDatasheet relay_datasheet(const DriverSpec& s);
// Copies the supply voltage, coil resistance and inductance into the NaN fields of s.relay.
void freeze_relay_datasheet(DriverSpec& s);
}  // namespace coilkick::drivers
