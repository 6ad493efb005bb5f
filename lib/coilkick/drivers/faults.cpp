#include "coilkick/drivers/faults.hpp"

#include <cmath>
#include <optional>
#include <set>
#include <sstream>

#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/mosfet.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/operating_point_start.hpp"
#include "coilkick/drivers/run_time_origin.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/rewired_element.hpp"
#include "coilkick/engine/transmission_line.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {
namespace {

constexpr double kOpen_ohm = 1e12, kShort_ohm = 0.01, kLeak_ohm = 100e3;
// An open gate or base floats: its own leakage to the source or emitter is what sets its DC
// point (a MOSFET's gate leakage of the order of 100 nA at 20 V, a gigaohm or more: typical of
// the class, from memory). Without it the floating node sat between picosiemens of the device and
// of the solver, anywhere within the current tolerance, and with a relay's armature the DC was
// not found (a high-side P-MOSFET half on).
constexpr double kFloatingControl_ohm = 1e9;
constexpr double kShortedTurns = 0.3;   // fraction of the turns shorted
constexpr double kLowSupply = 0.75;     // fraction of the supply voltage
constexpr double kResistorPower_W = 0.25;  // small chip resistors: 0.1–0.25 W (common practice)

using engine::Element;
using engine::Network;

bool is_diode(const Element& e) {
  return dynamic_cast<const devices::PhysicalDiode*>(&e) || dynamic_cast<const devices::PwlDiode*>(&e);
}
bool is_transistor(const Element& e) {
  return dynamic_cast<const devices::PhysicalBjt*>(&e) || dynamic_cast<const devices::PwlBjt*>(&e) ||
         dynamic_cast<const devices::PhysicalMosfet*>(&e) || dynamic_cast<const devices::PwlMosfet*>(&e);
}

std::string fmt(double v, const char* unit) {
  std::ostringstream o;
  o.precision(3);
  o << v << " " << unit;
  return o.str();
}

struct Injector {
  const BuiltDriver& healthy;
  BuiltDriver out;
  explicit Injector(const BuiltDriver& h) : healthy(h), out(h) {}
  const Element& element(const std::string& name) const { return out.network.element(name); }
  void resistor_in_place(const std::string& name, double ohm) {
    const auto& e = element(name);
    out.network.replace(name, std::make_shared<engine::Resistor>(name, e.terminals()[0], e.terminals()[1], ohm));
  }
  void resistor_across(const std::string& name, const std::string& a, const std::string& b, double ohm) {
    out.network.add_resistor(name, a, b, ohm);
  }
};

struct Evaluated {
  FaultCase c;
  bool coil_present = true;
};

// At DC a cable is its two cores, each half the loop resistance: the far end's terminals then
// read the board's potentials less the cores' drops, as a meter at the coil would (the line
// element reads the same, but as one loop with a common-mode path, so a fault of one core needs
// the cores apart). On a
// board whose coils share a common core ("cable_common_core", lumped), a line is one core: its
// own, on the switched side; its common side is the shared core (here a 1 µΩ link).
engine::Network with_cables_as_cores(const engine::Network& n) {
  constexpr double kLink_ohm = 1e-6;
  engine::Network out = n;
  for (const auto& e : n.elements()) {
    const auto* line = dynamic_cast<const engine::TransmissionLine*>(e.get());
    if (!line) continue;
    const auto& t = e->terminals();
    const double loop_ohm = line->parameters().loop_resistance_ohm;
    const bool common_a = t[0] == "cable_common", common_k = t[1] == "cable_common";
    const double a_ohm = common_a ? kLink_ohm : common_k ? loop_ohm : 0.5 * loop_ohm;
    const double k_ohm = common_k ? kLink_ohm : common_a ? loop_ohm : 0.5 * loop_ohm;
    out.replace(e->name(), std::make_shared<engine::Resistor>(e->name(), t[0], t[2], a_ohm));
    out.add_resistor(e->name() + ".return_core", t[1], t[3], k_ohm);
  }
  return out;
}

// The channel a part belongs to (DriverSpec::channels): k for a part named behind a further
// channel's name, 0 for the first channel's and the board's.
std::size_t channel_of(const DriverSpec& spec, const std::string& element) {
  for (std::size_t k = 0; k < spec.channels.size(); ++k) {
    if (element.rfind(spec.channels[k].name + ".", 0) == 0) return k + 1;
  }
  return 0;
}
std::string channel_prefix(const DriverSpec& spec, std::size_t k) { return k == 0 ? "" : spec.channels[k - 1].name + "."; }

// DC readings and, where the coil carries current, the switch-off — as channel k sees them (its
// coil's current, its metrics and checks).
// The faulty board's DC points (drive on, and long after the drive's fall), relays operated where
// they can be. A pwl board whose DC Newton fails from the cold guess (a pwl Darlington circling
// between its pieces) starts from the same faulty board's points at the physical level, as
// drivers/switch_off does for a run; `from_physical` then says so.
OperatingPoints fault_dc_points(const engine::Network& dc, const engine::Circuit& c, double t_late, const BuiltDriver* smooth,
                                bool& from_physical) {
  from_physical = false;
  try {
    return {relay::operating_point_with_armatures_closed(dc, c, 0.0), relay::operating_point_with_armatures_closed(dc, c, t_late)};
  } catch (const engine::OperatingPointError& failure) {
    if (!smooth) throw;
    const engine::Network smooth_dc = with_cables_as_cores(smooth->network);
    const engine::Circuit sc(smooth_dc);
    if (!same_state_names(sc, c)) throw failure;
    OperatingPoints start;
    try {
      start = {relay::operating_point_with_armatures_closed(smooth_dc, sc, 0.0),
               relay::operating_point_with_armatures_closed(smooth_dc, sc, t_late)};
    } catch (const engine::SimulationError&) {
      throw failure;
    }
    from_physical = true;
    return {engine::solve_operating_point(c, engine::CircuitState{0.0, start.on.values}),
            engine::solve_operating_point(c, engine::CircuitState{t_late, start.off.values})};
  }
}

// `smooth`: the same faulty board at the physical level, for a pwl board (else null).
FaultCase evaluate(const DriverSpec& spec, const BuiltDriver& b, const std::string& part, const std::string& fault,
                   bool run_switch_off, std::size_t k = 0, const BuiltDriver* smooth = nullptr) {
  FaultCase fc;
  fc.part = part;
  fc.fault = fault;
  fc.channel = k == 0 ? "" : spec.channels[k - 1].name;
  try {
    const engine::Network dc = with_cables_as_cores(b.network);
    const engine::Circuit c(dc);
    const double t_late = spec.drive.switch_off_at_s + spec.drive.fall_time_s + 1.0;
    bool from_physical = false;
    const OperatingPoints points = fault_dc_points(dc, c, t_late, smooth, from_physical);
    const engine::CircuitState& on = points.on;
    const engine::CircuitState& off = points.off;
    for (const auto& n : c.node_names()) {
      if (n == "logic" || (n.size() > 6 && n.compare(n.size() - 6, 6, ".logic") == 0)) continue;  // logic outputs' internal source nodes
      fc.readings.push_back({n, c.node_voltage_V(n, 0.0, on.values.data()), c.node_voltage_V(n, t_late, off.values.data())});
    }
    engine::Workspace w = c.make_workspace();
    const int coil = c.element_index(channel_prefix(spec, k) + "coil");
    fc.coil_current_on_A = c.terminal_currents_A(coil, 0.0, on.values.data(), w)[0];
    fc.coil_current_off_A = c.terminal_currents_A(coil, t_late, off.values.data(), w)[0];
    c.evaluate(0.0, 0.0, on.values.data(), w, false);
    fc.supply_current_on_A = w.source_current_A[0];
    std::map<std::string, double> heat;
    for (std::size_t k = 0; k < c.power_channels().size(); ++k) {
      const auto& ch = c.power_channels()[k];
      if (ch.kind == engine::PowerChannelSpec::Kind::dissipated) heat[ch.element] += w.rate[c.circuit_state_count() + static_cast<int>(k)];
    }
    for (const auto& [n, p] : heat) fc.on_state_heat_W.emplace_back(n, p);
    // A relay the faulty driver never operates has no contacts to open: no switch-off run.
    if (run_switch_off && std::abs(fc.coil_current_on_A) > 1e-6 && !relay::armature_not_held(dc, c, on)) {
      // A fault that keeps the coil energised: the DC points just solved start the run's own
      // (where the circuits have one shape: no cable), so that its off point is known before the
      // run, which then runs once — not first as if the driver blocked (switch_off.cpp). Where the
      // driver blocks, the run is the plain one — unless only the physical level's start found the
      // points, which the run then needs as well.
      const bool keeps_current = std::abs(fc.coil_current_off_A) >= kBlockingCurrentFraction * std::abs(fc.coil_current_on_A);
      auto r = simulate_switch_off(spec, b, keeps_current || from_physical ? &points : nullptr);
      fc.switch_off_run = true;
      fc.switch_off = k == 0 ? r.metrics : r.channels[k].metrics;
      fc.checks = k == 0 ? r.checks : r.channels[k].checks;
    }
  } catch (const engine::SimulationError& e) {
    fc.error = std::string("simulation failed: ") + e.what();
  }
  return fc;
}

// The power rating of a part of channel k (`element` its name, the channel's prefix removed).
double power_limit(const BuiltDriver& board, const catalogue::Catalogue& parts, const DriverSpec& board_spec, std::string element) {
  const std::size_t k = channel_of(board_spec, element);
  const BuiltDriver& b = k == 0 ? board : board.channels[k - 1];
  const DriverSpec spec = channel_driver_spec(board_spec, k);
  element = element.substr(channel_prefix(board_spec, k).size());
  auto rating = [&](const catalogue::PartRecord* p) { return p && p->has_rating("power") ? p->rating("power") : NAN; };
  for (const auto& sw : b.switch_elements) {
    if (sw == b.local(element) && b.switch_part) return rating(b.switch_part);
  }
  if (element == "level_shifter") return rating(&parts.part(spec.switch_.level_shifter_part));
  const auto& cl = spec.clamp;
  if (element == "clamp_diode") return rating(&parts.part(cl.diode_part));
  if (element == "clamp_zener") {
    return rating(&parts.part(cl.kind == ClampKind::active_clamp ? cl.active_clamp_zener_part : cl.zener_part));
  }
  if (element == "clamp_tvs") return rating(&parts.part(cl.tvs_part));
  if (element.find("resistor") != std::string::npos && element != "logic_output") return kResistorPower_W;
  return NAN;
}

void classify(FaultCase& f, const FaultCase& h, const DriverSpec& board_spec, const BuiltDriver& b, const catalogue::Catalogue& parts) {
  if (!f.error.empty()) return;
  const DriverSpec spec = channel_driver_spec(board_spec, channel_of(board_spec, f.channel + "."));
  const std::string coil = f.channel.empty() ? "coil" : f.channel + ".coil";
  const double r_hot = coil_resistance_ohm(spec.coil);
  double i_op = spec.coil.operate_current_A;
  if (std::isnan(i_op) && !std::isnan(spec.coil.operate_voltage_V)) i_op = spec.coil.operate_voltage_V / r_hot;
  const double i_rel = release_current_A(spec.coil);
  const double operate_limit = std::isnan(i_op) ? 0.5 * h.coil_current_on_A : i_op;
  const double release_limit = std::isnan(i_rel) ? 0.5 * h.coil_current_on_A : i_rel;
  auto add = [&](const char* s, const std::string& why) {
    f.symptoms.emplace_back(s);
    f.reasons.push_back(why);
  };
  if (std::abs(f.coil_current_on_A) < operate_limit) {
    add("relay never operates", "on-state coil current " + fmt(f.coil_current_on_A, "A") + " below " + fmt(operate_limit, "A"));
  }
  if (std::abs(f.coil_current_off_A) >= release_limit) {
    add("relay never releases", "off-state coil current " + fmt(f.coil_current_off_A, "A") + " at or above the release current " +
                                    fmt(release_limit, "A"));
  } else if (f.switch_off_run && h.switch_off_run) {
    const double t = f.switch_off.get("release_time_s"), th = h.switch_off.get("release_time_s");
    if (std::isfinite(t) && std::isfinite(th) && t > 1.5 * th) {
      add("relay releases slowly", "release time " + fmt(t * 1e3, "ms") + " against " + fmt(th * 1e3, "ms") + " healthy");
    }
  }
  std::string hot;
  for (const auto& [el, p] : f.on_state_heat_W) {
    const double lim = power_limit(b, parts, board_spec, el);
    if (std::isfinite(lim) && p > lim) hot += (hot.empty() ? "" : "; ") + el + " dissipates " + fmt(p, "W") + " (limit " + fmt(lim, "W") + ")";
  }
  auto heat_of = [](const FaultCase& c, const std::string& el) {
    for (const auto& [n, p] : c.on_state_heat_W) {
      if (n == el) return p;
    }
    return 0.0;
  };
  if (heat_of(f, coil) > 1.3 * heat_of(h, coil)) {
    hot += (hot.empty() ? "" : "; ") + coil + " dissipates " + fmt(heat_of(f, coil), "W") + " against " +
           fmt(heat_of(h, coil), "W") + " healthy";
  }
  if (std::abs(f.supply_current_on_A) > 2.0 * std::abs(h.supply_current_on_A) + 1e-3) {
    hot += (hot.empty() ? "" : "; ") + std::string("supply current ") + fmt(f.supply_current_on_A, "A") + " against " +
           fmt(h.supply_current_on_A, "A") + " healthy (supply path overloaded)";
  }
  for (const auto& c : f.checks) {
    if (c.status == CheckStatus::fail && (c.name == "switch_voltage" || c.name.rfind("clamp_", 0) == 0 || c.name == "switch_avalanche_energy")) {
      hot += (hot.empty() ? "" : "; ") + c.name + " " + fmt(c.value, c.unit.c_str()) + " over " + fmt(c.limit, c.unit.c_str()) +
             " at each switch-off";
    }
  }
  if (!hot.empty()) add("driver part overheats", hot);
  if (f.symptoms.empty()) add("no visible symptom", "the coil operates and releases as when healthy; readings below show the fault");
}

}  // namespace

const FaultCase& FaultReport::healthy_for(const std::string& channel) const {
  for (const auto& h : healthy_channels) {
    if (h.channel == channel) return h;
  }
  return healthy;
}

const std::vector<std::string>& symptom_names() {
  static const std::vector<std::string> n{"relay never operates", "relay never releases", "relay releases slowly",
                                          "driver part overheats", "no visible symptom"};
  return n;
}

// Every fault the analysis injects into the healthy board, in order: (part, fault) and the faulty board.
using FaultCases = std::vector<std::pair<std::pair<std::string, std::string>, BuiltDriver>>;
FaultCases fault_cases(const DriverSpec& spec, const BuiltDriver& healthy) {
  FaultCases cases;
  auto add_case = [&](const std::string& part, const std::string& fault, Injector& inj) { cases.push_back({{part, fault}, inj.out}); };
  // A coil opens, or 30 % of its turns short (`shorted`: the same coil with fewer turns).
  auto coil_faults = [&](const std::string& n, std::shared_ptr<const engine::Element> shorted) {
    Injector open(healthy), turns(healthy);
    open.resistor_in_place(n, kOpen_ohm);
    add_case(n, "open", open);
    turns.out.network.replace(n, std::move(shorted));
    add_case(n, "30 % of turns shorted", turns);
  };
  const std::set<std::string> extra(healthy.extra_elements.begin(), healthy.extra_elements.end());
  for (const auto& e : healthy.network.elements()) {
    const std::string n = e->name();
    const auto& t = e->terminals();
    // Capacitors that are parts on the board (not the winding's or the layout's parasitics).
    const bool board_capacitor = n.find("snubber_capacitor") != std::string::npos || n == "bulk_capacitor" || extra.count(n);
    if (dynamic_cast<const engine::Resistor*>(e.get())) {
      const std::string own = n.substr(channel_prefix(spec, channel_of(spec, n)).size());
      if (own == "logic_output" || own.rfind("switch.", 0) == 0) continue;  // inside the logic chip / the Darlington
      Injector i(healthy);
      i.resistor_in_place(n, kOpen_ohm);
      add_case(n, "open", i);
    } else if (is_diode(*e)) {
      Injector open(healthy), shorted(healthy);
      open.resistor_in_place(n, kOpen_ohm);
      shorted.resistor_in_place(n, kShort_ohm);
      add_case(n, "open", open);
      add_case(n, "shorted", shorted);
    } else if (dynamic_cast<const engine::Capacitor*>(e.get()) && board_capacitor) {
      Injector open(healthy), shorted(healthy);
      open.resistor_in_place(n, kOpen_ohm);
      shorted.resistor_in_place(n, kShort_ohm);
      add_case(n, "open", open);
      add_case(n, "shorted", shorted);
    } else if (const std::string own = n.substr(channel_prefix(spec, channel_of(spec, n)).size());
               is_transistor(*e) && (own == "switch" || own == "switch.output" || own == "level_shifter" || extra.count(n))) {
      const bool mos = dynamic_cast<const devices::PhysicalMosfet*>(e.get()) || dynamic_cast<const devices::PwlMosfet*>(e.get());
      Injector ce(healthy), base(healthy), leak(healthy);
      ce.resistor_across(n + ".short", t[0], t[2], kShort_ohm);
      add_case(n, mos ? "drain-source shorted" : "collector-emitter shorted", ce);
      base.out.network.replace(n, std::make_shared<engine::RewiredElement>(e, std::vector<std::string>{t[0], n + ".control_open", t[2]}));
      base.resistor_across(n + ".control_leakage", n + ".control_open", t[2], kFloatingControl_ohm);
      add_case(n, mos ? "gate open" : "base open", base);
      leak.resistor_across(n + ".leak", t[0], t[1], kLeak_ohm);
      add_case(n, mos ? "drain-gate leaky" : "collector-base junction leaky", leak);
    } else if (dynamic_cast<const engine::Coil*>(e.get()) && n != channel_prefix(spec, channel_of(spec, n)) + "coil") {
      // An extra inductor or the supply's inductance: its winding opens.
      Injector open(healthy);
      open.resistor_in_place(n, kOpen_ohm);
      add_case(n, "open", open);
    } else if (const auto* coil = dynamic_cast<const engine::Coil*>(e.get())) {
      engine::CoilParameters p = coil->parameters();
      p.inductance_H *= (1.0 - kShortedTurns) * (1.0 - kShortedTurns);  // L ∝ N²
      p.resistance_ohm *= (1.0 - kShortedTurns);                         // R ∝ N (same wire)
      coil_faults(n, std::make_shared<engine::Coil>(n, t[0], t[1], p));
    } else if (const auto* arm = dynamic_cast<const relay::ArmatureCoil*>(e.get())) {
      relay::ArmatureCoilParameters p = arm->parameters();
      p.magnetic.turns *= (1.0 - kShortedTurns);  // the magnetic model scales L and force with N²
      p.magnetic.leakage_inductance_H *= (1.0 - kShortedTurns) * (1.0 - kShortedTurns);
      p.resistance_ohm *= (1.0 - kShortedTurns);  // R ∝ N (same wire)
      coil_faults(n, std::make_shared<relay::ArmatureCoil>(n, t[0], t[1], p));
    }
  }
  if (spec.cable.present()) {
    // Field wiring: one core broken at the coil's end, or the two cores shorted there.
    Injector open(healthy), shorted(healthy);
    for (const auto& e : healthy.network.elements()) {
      if (e->name() != "coil") continue;
      open.out.network.replace("coil", std::make_shared<engine::RewiredElement>(
                                           e, std::vector<std::string>{"cable.break", e->terminals()[1]}));
    }
    open.resistor_across("cable.break", healthy.coil_in_node, "cable.break", kOpen_ohm);
    add_case("cable", "open (one core, at the coil)", open);
    shorted.resistor_across("cable.short", healthy.coil_in_node, healthy.coil_out_node, kShort_ohm);
    add_case("cable", "shorted (at the coil)", shorted);
  }
  {
    Injector low(healthy);
    low.out.network.set_source_waveform("supply", engine::Waveform::constant(kLowSupply * spec.supply.voltage_V));
    add_case("supply", "low (75 %)", low);
  }
  return cases;
}

FaultReport analyse_faults(const DriverSpec& spec, const catalogue::Catalogue& parts, const std::function<void(int, int)>& progress) {
  // A late switch-off on the run's own time axis (run_time_origin.hpp): the report holds DC
  // readings and metrics measured from the edges, nothing on the scenario's time axis.
  if (const double shift = run_time_shift_s(spec); shift > 0.0) return analyse_faults(moved_in_time(spec, shift), parts, progress);
  const BuiltDriver healthy = build_driver_network(spec, parts);
  const FaultCases cases = fault_cases(spec, healthy);
  // A pwl board's faults at the physical level, the DC starts where the pwl Newton fails.
  std::optional<BuiltDriver> smooth_healthy;
  FaultCases smooth_cases;
  if (spec.analysis.model_level == devices::ModelLevel::pwl) {
    DriverSpec smooth = spec;
    smooth.analysis.model_level = devices::ModelLevel::physical;
    smooth_healthy = build_driver_network(smooth, parts);
    smooth_cases = fault_cases(smooth, *smooth_healthy);
  }
  const auto smooth_of = [&](std::size_t i) -> const BuiltDriver* {
    return i < smooth_cases.size() && smooth_cases[i].first == cases[i].first ? &smooth_cases[i].second : nullptr;
  };
  const BuiltDriver* smooth_board = smooth_healthy ? &*smooth_healthy : nullptr;
  FaultReport rep;
  rep.healthy = evaluate(spec, healthy, "none", "healthy", true, 0, smooth_board);
  if (!rep.healthy.error.empty()) throw engine::SimulationError("healthy driver: " + rep.healthy.error);
  for (std::size_t k = 1; k <= spec.channels.size(); ++k) {
    rep.healthy_channels.push_back(evaluate(spec, healthy, "none", "healthy", true, k, smooth_board));
  }

  int done = 0;
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const auto& [id, built] = cases[i];
    if (progress) progress(done++, static_cast<int>(cases.size()));
    DriverSpec s = spec;
    if (id.first == "supply") s.supply.voltage_V *= kLowSupply;
    const std::size_t k = channel_of(spec, id.first);
    const bool coil_open = (id.first == channel_prefix(spec, k) + "coil" && id.second == "open") ||
                           (id.first == "cable" && id.second.rfind("open", 0) == 0);
    FaultCase f = evaluate(s, built, id.first, id.second, !coil_open, k, smooth_of(i));
    classify(f, rep.healthy_for(f.channel), s, built, parts);
    rep.faults.push_back(std::move(f));
  }
  if (progress) progress(done, static_cast<int>(cases.size()));
  for (std::size_t k = 0; k < rep.faults.size(); ++k) {
    for (const auto& sym : rep.faults[k].symptoms) rep.by_symptom[sym].push_back(static_cast<int>(k));
    if (!rep.faults[k].error.empty()) rep.by_symptom["simulation failed"].push_back(static_cast<int>(k));
  }
  return rep;
}

}  // namespace coilkick::drivers
