#include "coilkick/drivers/driver_network.hpp"

#include "coilkick/drivers/cable_loss.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <stdexcept>

#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/darlington.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/mosfet.hpp"
#include "coilkick/engine/closest_name.hpp"
#include "coilkick/engine/transmission_line.hpp"

namespace coilkick::drivers {
namespace {

using engine::Network;

struct Builder {
  const DriverSpec& s;  // one channel's view (channel_driver_spec)
  const catalogue::Catalogue& parts;
  BuiltDriver out;
  devices::ModelLevel level() const { return s.analysis.model_level; }
  // A name of this channel's own (node or element): plain in the first channel, "<name>." before it in the others.
  std::string n(const std::string& local) const { return out.local(local); }
  // A board of several channels with a cable: every coil's common side runs on one shared core
  // (the field wiring's common wire), each coil's switched side on a core of its own.
  bool shared_cable_core = false;

  Overrides with_temperature(Overrides o) const {
    if (!o.count("temperature")) o["temperature"] = s.analysis.device_temperature_C;
    return o;
  }
  // A part that carries the coil's current in breakdown (the switch avalanching, a Zener or TVS
  // clamping the coil): its pwl breakdown line is the tangent of the physical curve at the coil's
  // on-state current (supply over hot winding resistance), so both model levels clamp at the same
  // voltage there (devices/junction.hpp). An override of the key wins.
  Overrides carrying_coil_current(Overrides o) const {
    if (!o.count("pwl_breakdown_reference_current")) {
      o["pwl_breakdown_reference_current"] = s.supply.voltage_V / coil_resistance_ohm(s.coil);
    }
    return with_temperature(o);
  }
  const catalogue::PartRecord& part(const std::string& name, const char* field) const {
    try {
      return parts.part(name);
    } catch (const std::invalid_argument& e) {
      throw std::invalid_argument(std::string(field) + ": " + e.what());
    }
  }
  // What each clamp part key accepts: a rectifier or signal diode where the part conducts forward;
  // a Zener or a (unidirectional) TVS where it clamps in breakdown — the two are used for one
  // another (common practice).
  struct PartRole {
    std::vector<std::string> families;
    const char* needed;
    bool carries_coil_current;  // in breakdown: see carrying_coil_current
  };
  static PartRole forward_diode() { return {{"diode"}, "a diode", false}; }
  static PartRole breakdown_clamp(bool carries_coil_current) {
    return {{"zener", "tvs"}, "a Zener or TVS", carries_coil_current};
  }
  // A diode-family part between anode and cathode, of the family its key asks for.
  void diode(const std::string& element, const std::string& part_name, const Overrides& o, const char* field,
             const std::string& anode, const std::string& cathode, const PartRole& role) {
    const auto& rec = part(part_name, field);
    if (std::find(role.families.begin(), role.families.end(), rec.family) == role.families.end()) {
      throw std::invalid_argument(std::string(field) + ": part '" + part_name + "' is a " + rec.family + "; " + role.needed +
                                  " is needed here");
    }
    const Overrides with = role.carries_coil_current ? carrying_coil_current(o) : with_temperature(o);
    out.network.add(devices::make_diode(element, anode, cathode, catalogue::diode_parameters(rec, with), level()));
    out.clamp_elements.push_back(element);
    out.clamp_parts.push_back(&rec);
    out.clamp_part_elements.push_back(element);
  }
  void resistor(const std::string& element, const std::string& a, const std::string& b, double ohm, bool clamp) {
    out.network.add_resistor(element, a, b, ohm);
    if (clamp) out.clamp_elements.push_back(element);
  }

  // The supply (driver_spec.hpp, SupplySpec): the ideal source is always the first source, named
  // "supply". Behind a source impedance it sits at "supply_source", behind the reverse-polarity
  // diode (only) at "supply_in"; the board's rail is always the node "supply".
  void supply() {
    const auto& sp = s.supply;
    auto& net = out.network;
    const bool impedance = sp.source_resistance_ohm > 0.0 || sp.source_inductance_H > 0.0;
    const bool diode_in_series = !sp.reverse_polarity_diode_part.empty();
    const std::string after_impedance = diode_in_series ? "supply_in" : "supply";
    net.add_voltage_source("supply", impedance ? "supply_source" : after_impedance, engine::Waveform::constant(sp.voltage_V));
    if (sp.source_inductance_H > 0.0) {
      net.add_coil("supply_inductance", "supply_source", after_impedance, {sp.source_inductance_H, sp.source_resistance_ohm});
    } else if (impedance) {
      net.add_resistor("supply_resistance", "supply_source", after_impedance, sp.source_resistance_ohm);
    }
    if (diode_in_series) {
      const auto& rec = part(sp.reverse_polarity_diode_part, "supply.reverse_polarity_diode_part");
      if (rec.family != "diode") {
        throw std::invalid_argument("supply.reverse_polarity_diode_part: part '" + rec.name + "' is a " + rec.family +
                                    "; a diode is needed here");
      }
      net.add(devices::make_diode("reverse_polarity_diode", "supply_in", "supply",
                                  catalogue::diode_parameters(rec, with_temperature(sp.reverse_polarity_diode_overrides)), level()));
    }
    if (sp.bulk_capacitance_F > 0.0) {
      if (sp.bulk_capacitor_esr_ohm > 0.0) {
        net.add_resistor("bulk_capacitor_esr", "supply", "bulk_mid", sp.bulk_capacitor_esr_ohm);
        net.add_capacitor("bulk_capacitor", "bulk_mid", Network::ground, sp.bulk_capacitance_F);
      } else {
        net.add_capacitor("bulk_capacitor", "supply", Network::ground, sp.bulk_capacitance_F);
      }
    }
  }

  void switch_stage() {
    const auto& sw = s.switch_;
    const auto& rec = part(sw.part, "switch.part");
    out.switch_part = &rec;
    const std::string top = to_string(sw.topology);
    auto require = [&](std::initializer_list<const char*> fams) {
      for (const char* f : fams) {
        if (rec.family == f) return;
      }
      throw std::invalid_argument("switch.part: '" + sw.part + "' is a " + rec.family + ", which does not fit topology " + top);
    };
    const std::string c = n("switch"), b = n("base"), sw_el = n("switch");
    switch (sw.topology) {
      case Topology::low_side_npn:
        require({"npn"});
        out.network.add(devices::make_bjt(sw_el, c, b, Network::ground, catalogue::bjt_parameters(rec, carrying_coil_current(sw.overrides)), level()));
        break;
      case Topology::low_side_nmos:
        require({"nmos"});
        out.mosfet = true;
        out.network.add(devices::make_mosfet(sw_el, c, b, Network::ground, catalogue::mosfet_parameters(rec, carrying_coil_current(sw.overrides)), level()));
        break;
      case Topology::low_side_darlington: {
        require({"darlington_npn"});
        devices::add_darlington(out.network, sw_el, c, b, Network::ground,
                                catalogue::darlington_parameters(rec, carrying_coil_current(sw.overrides)), level());
        out.switch_elements = {n("switch.input"), n("switch.output"), n("switch.input_resistor"), n("switch.output_resistor")};
        break;
      }
      case Topology::high_side_pnp:
        require({"pnp"});
        out.high_side = true;
        out.network.add(devices::make_bjt(sw_el, c, b, "supply", catalogue::bjt_parameters(rec, carrying_coil_current(sw.overrides)), level()));
        break;
      case Topology::high_side_pmos:
        require({"pmos"});
        out.high_side = true;
        out.mosfet = true;
        out.network.add(devices::make_mosfet(sw_el, c, b, "supply", catalogue::mosfet_parameters(rec, carrying_coil_current(sw.overrides)), level()));
        break;
    }
    if (out.switch_elements.empty()) out.switch_elements = {sw_el};
    out.switch_control_terminal_element = sw.topology == Topology::low_side_darlington ? n("switch.input") : sw_el;
    if (!out.high_side) {
      resistor(n("base_resistor"), n("logic_out"), b, sw.base_resistor_ohm, false);
      out.switch_high_node = c;
      out.switch_low_node = Network::ground;
      return;
    }
    // Level shifter: logic -> NPN, its collector pulls the switch's base/gate down through the
    // base (gate) resistor; the pull-up holds the switch off.
    const auto& ls = part(sw.level_shifter_part, "switch.level_shifter_part");
    if (ls.family != "npn") throw std::invalid_argument("switch.level_shifter_part: '" + ls.name + "' is a " + ls.family + ", an NPN is needed");
    out.network.add(devices::make_bjt(n("level_shifter"), n("shifter_collector"), n("shifter_base"), Network::ground,
                                      catalogue::bjt_parameters(ls, with_temperature(sw.level_shifter_overrides)), level()));
    resistor(n("shifter_base_resistor"), n("logic_out"), n("shifter_base"), sw.level_shifter_base_resistor_ohm, false);
    resistor(n("base_resistor"), b, n("shifter_collector"), sw.base_resistor_ohm, false);
    resistor(n("pullup_resistor"), b, "supply", sw.pullup_resistor_ohm, false);
    out.switch_high_node = "supply";
    out.switch_low_node = c;
  }

  void coil() {
    const auto& cs = s.coil;
    out.coil_resistance_ohm = coil_resistance_ohm(cs);
    engine::CoilParameters p{cs.inductance_H, out.coil_resistance_ohm, cs.core_loss_resistance_ohm};
    // Coil current flows from the supply side to the switched end (low side) or from the
    // switched end to ground (high side): positive in the on-state either way.
    const std::string board_a = out.high_side ? n("switch") : "supply", board_k = out.high_side ? Network::ground : n("switch");
    // Field wiring: the coil at the cable's far end, its terminals "coil_in" (where its current
    // enters) and "coil_out"; the clamp and the switch stay on the board.
    const std::string a = s.cable.present() ? n("coil_in") : board_a, k = s.cable.present() ? n("coil_out") : board_k;
    if (s.cable.present()) {
      const auto& cb = s.cable;
      const double delay = cb.delay_s();
      // With a shared common core the pair's line carries its own core's resistance; the common
      // core's is one resistor to the board for all channels (common_cable_core()).
      const double loop_ohm = shared_cable_core ? 0.5 * cb.loop_resistance_ohm() : cb.loop_resistance_ohm();
      const std::string near_a = shared_cable_core && !out.high_side ? "cable_common" : board_a;
      const std::string near_k = shared_cable_core && out.high_side ? "cable_common" : board_k;
      engine::TransmissionLineParameters line{cb.characteristic_impedance_ohm(), delay, loop_ohm, high_frequency_loss_fraction(cb) * delay};
      line.common_mode_resistance_ohm = 0.25 * loop_ohm;  // the coil's end floats: the cores carry its common mode
      out.network.add(std::make_shared<engine::TransmissionLine>(n("cable"), near_a, near_k, a, k, line));
    }
    out.coil_in_node = a;
    out.coil_out_node = k;
    if (s.relay.armature_model) {
      out.relay_calibration = &relay::calibrate_relay_cached(relay_datasheet(s));
      relay::ArmatureCoilParameters ap = out.relay_calibration->parameters;
      ap.resistance_ohm = out.coil_resistance_ohm;
      // A coil whose inductance is not the data sheet's (a tolerance run, a sweep of
      // coil.inductance): the same magnet and springs with a winding of other turns, N² scaled so
      // that L(g) is that ratio times the data sheet's at every gap.
      const double ratio = cs.inductance_H / relay_datasheet(s).closed_inductance_H;
      if (ratio != 1.0) {
        ap.magnetic.turns *= std::sqrt(ratio);
        ap.magnetic.leakage_inductance_H *= ratio;
      }
      ap.core_loss_resistance_ohm = cs.core_loss_resistance_ohm;
      out.armature = ap;
      out.network.add(std::make_shared<relay::ArmatureCoil>(n("coil"), a, k, ap));
    } else {
      out.network.add_coil(n("coil"), a, k, p);
    }
    if (cs.winding_capacitance_F > 0.0) out.network.add_capacitor(n("winding_capacitance"), a, k, cs.winding_capacitance_F);
    if (s.switch_.board_stray_capacitance_F > 0.0) {
      out.network.add_capacitor(n("board_stray"), n("switch"), Network::ground, s.switch_.board_stray_capacitance_F);
    }
  }

  void clamp() {
    const auto& cl = s.clamp;
    // "Across the coil" joins the switched end to the coil's other end (supply or ground);
    // "across the switch" joins it to the switch's other end.
    const std::string sw = n("switch"), mid = n("clamp_mid");
    const std::string coil_far = out.high_side ? Network::ground : "supply";
    const std::string switch_far = out.high_side ? "supply" : Network::ground;
    // Diode orientation: conducts from the switched end towards the coil's far end (low side),
    // or from ground towards the switched end (high side).
    auto across_coil_anode = [&](const std::string& near, const std::string& far) { return out.high_side ? far : near; };
    auto across_coil_cathode = [&](const std::string& near, const std::string& far) { return out.high_side ? near : far; };
    switch (cl.kind) {
      case ClampKind::none:
        break;
      case ClampKind::diode:
        diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part",
              across_coil_anode(sw, coil_far), across_coil_cathode(sw, coil_far), forward_diode());
        break;
      case ClampKind::diode_zener:
        // switched end -> diode -> clamp_mid -> Zener (reverse) -> far end (low side); mirrored high side.
        if (!out.high_side) {
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", sw, mid, forward_diode());
          diode(n("clamp_zener"), cl.zener_part, cl.zener_overrides, "clamp.zener_part", coil_far, mid, breakdown_clamp(true));
        } else {
          diode(n("clamp_zener"), cl.zener_part, cl.zener_overrides, "clamp.zener_part", mid, coil_far, breakdown_clamp(true));
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", mid, sw, forward_diode());
        }
        break;
      case ClampKind::diode_resistor:
        if (!out.high_side) {
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", sw, mid, forward_diode());
          resistor(n("clamp_resistor"), mid, coil_far, cl.resistor_ohm, true);
        } else {
          resistor(n("clamp_resistor"), coil_far, mid, cl.resistor_ohm, true);
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", mid, sw, forward_diode());
        }
        break;
      case ClampKind::rc_across_coil:
        snubber(sw, coil_far, n("snubber"));
        break;
      case ClampKind::rc_across_switch:
        snubber(sw, switch_far, n("snubber"));
        break;
      case ClampKind::tvs_across_switch:
        // Reverse-biased across the switch: cathode on the switch's positive end.
        if (!out.high_side) diode(n("clamp_tvs"), cl.tvs_part, cl.tvs_overrides, "clamp.tvs_part", Network::ground, sw, breakdown_clamp(true));
        else diode(n("clamp_tvs"), cl.tvs_part, cl.tvs_overrides, "clamp.tvs_part", sw, "supply", breakdown_clamp(true));
        break;
      case ClampKind::active_clamp:
        // Zener from the switched end to the control terminal, with a blocking diode so the
        // Zener never conducts forward in the on-state.
        if (!out.high_side) {
          diode(n("clamp_zener"), cl.active_clamp_zener_part, cl.active_clamp_zener_overrides,
                "clamp.active_clamp_zener_part", mid, sw, breakdown_clamp(false));
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", mid, n("base"), forward_diode());
        } else {
          diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", n("base"), mid, forward_diode());
          diode(n("clamp_zener"), cl.active_clamp_zener_part, cl.active_clamp_zener_overrides,
                "clamp.active_clamp_zener_part", sw, mid, breakdown_clamp(false));
        }
        break;
      case ClampKind::common_pin:
        // To the board's common pin (its Zener is the board's, built once: common_clamp()).
        diode(n("clamp_diode"), cl.diode_part, cl.diode_overrides, "clamp.diode_part", sw, common_pin_node(s), forward_diode());
        break;
    }
    if (cl.add_rc_snubber_across_coil && cl.kind != ClampKind::rc_across_coil) snubber(sw, coil_far, n("extra_snubber"));
    if (!out.clamp_elements.empty()) out.clamp_current_element = out.clamp_elements.front();
  }

  // Extra parts (DriverSpec::extra_parts) between the builder's nodes or new ones.
  void extra_parts() {
    auto& net = out.network;
    std::set<std::string> known{Network::ground};
    for (const auto& e : net.elements()) known.insert(e->terminals().begin(), e->terminals().end());
    for (const auto& v : net.voltage_sources()) known.insert(v.node);
    // A new node must join at least two terminals; a single use is a dangling wire or a typo.
    std::map<std::string, int> uses;
    for (const auto& x : s.extra_parts) {
      for (const auto& n : x.nodes) ++uses[n];
    }
    const std::vector<std::string> names(known.begin(), known.end());
    for (const auto& x : s.extra_parts) {
      const std::string owner = "extra_part '" + x.name + "'";
      for (const auto& n : x.nodes) {
        if (!known.count(n) && uses[n] < 2) {
          throw std::invalid_argument(owner + ": node '" + n + "' is neither a node of the driver nor used by another extra part" +
                                      engine::did_you_mean(n, names));
        }
      }
      const std::set<std::string> distinct(x.nodes.begin(), x.nodes.end());
      if (distinct.size() != x.nodes.size()) throw std::invalid_argument(owner + ": joins a node to itself");
      for (const auto& e : net.elements()) {
        if (e->name() == x.name) throw std::invalid_argument(owner + ": the name is taken by a part of the driver");
      }
      auto need_nodes = [&](std::size_t n, const char* which) {
        if (x.nodes.size() != n) {
          throw std::invalid_argument(owner + ": joins " + std::to_string(x.nodes.size()) + " nodes; " + which);
        }
      };
      switch (x.element) {
        case ExtraElement::resistor:
          need_nodes(2, "a resistor joins 2");
          net.add_resistor(x.name, x.nodes[0], x.nodes[1], x.value);
          break;
        case ExtraElement::capacitor:
          need_nodes(2, "a capacitor joins 2");
          net.add_capacitor(x.name, x.nodes[0], x.nodes[1], x.value);
          break;
        case ExtraElement::inductor:
          need_nodes(2, "an inductor joins 2");
          net.add_coil(x.name, x.nodes[0], x.nodes[1], {x.value, x.series_resistance_ohm});
          break;
        case ExtraElement::part: {
          const auto& rec = part(x.part, (owner + " part").c_str());
          const auto o = with_temperature(x.overrides);
          if (rec.family == "diode" || rec.family == "zener" || rec.family == "tvs") {
            need_nodes(2, "a diode, Zener or TVS joins 2 (anode, cathode)");
            net.add(devices::make_diode(x.name, x.nodes[0], x.nodes[1], catalogue::diode_parameters(rec, o), level()));
          } else if (rec.family == "npn" || rec.family == "pnp") {
            need_nodes(3, "a transistor joins 3 (collector, base, emitter)");
            net.add(devices::make_bjt(x.name, x.nodes[0], x.nodes[1], x.nodes[2], catalogue::bjt_parameters(rec, o), level()));
          } else if (rec.family == "nmos" || rec.family == "pmos") {
            need_nodes(3, "a MOSFET joins 3 (drain, gate, source)");
            net.add(devices::make_mosfet(x.name, x.nodes[0], x.nodes[1], x.nodes[2], catalogue::mosfet_parameters(rec, o), level()));
          } else {
            throw std::invalid_argument(owner + ": part '" + rec.name + "' is a " + rec.family +
                                        "; an extra part is a diode, Zener, TVS, NPN, PNP or MOSFET");
          }
          break;
        }
      }
      out.extra_elements.push_back(x.name);
    }
  }

  // The logic output driving this channel's switch: a source behind its output resistance.
  void logic() {
    const auto& d = s.drive;
    out.network.add_voltage_source(n("logic"), n("logic"), engine::Waveform::edge(d.high_level_V, 0.0, d.switch_off_at_s, d.fall_time_s));
    resistor(n("logic_output"), n("logic"), n("logic_out"), d.output_resistance_ohm, false);
  }

  // The shared common core of a board's field wiring (shared_cable_core): half the loop resistance,
  // from the rail (low side) or ground (high side) to the lines' common terminal.
  void common_cable_core() {
    if (!shared_cable_core) return;
    out.network.add_resistor("cable_common_core", out.high_side ? Network::ground : "supply", "cable_common", 0.5 * s.cable.loop_resistance_ohm());
    out.cable_common_core_element = "cable_common_core";
  }

  // The board's common clamp pin's Zener (CommonClampSpec), cathode at the pin, anode at the rail.
  void common_clamp() {
    const auto& cc = s.common_clamp;
    if (cc.zener_part.empty()) return;
    const auto& rec = part(cc.zener_part, "common_clamp.zener_part");
    if (rec.family != "zener" && rec.family != "tvs") {
      throw std::invalid_argument("common_clamp.zener_part: part '" + rec.name + "' is a " + rec.family + "; a Zener or TVS is needed here");
    }
    if (!uses_common_pin(s)) return;  // no channel uses the pin (e.g. a comparison's other clamps)
    out.network.add(devices::make_diode("common_zener", "supply", "common_pin",
                                        catalogue::diode_parameters(rec, carrying_coil_current(cc.zener_overrides)), level()));
    out.common_clamp_element = "common_zener";
    out.common_clamp_part = &rec;
  }

  void snubber(const std::string& near, const std::string& far, const std::string& prefix) {
    const std::string mid = prefix + "_mid";
    resistor(prefix + "_resistor", near, mid, s.clamp.snubber_resistance_ohm, true);
    out.network.add_capacitor(prefix + "_capacitor", mid, far, s.clamp.snubber_capacitance_F);
    out.clamp_elements.push_back(prefix + "_capacitor");
  }
};

}  // namespace

std::string common_pin_node(const DriverSpec& s) { return s.common_clamp.zener_part.empty() ? "supply" : "common_pin"; }

std::string BuiltDriver::local(const std::string& name) const { return prefix + name; }

BuiltDriver build_driver_network(const DriverSpec& spec, const catalogue::Catalogue& parts) {
  check_driver_spec(spec);
  Builder b{spec, parts, {}};
  b.shared_cable_core = !spec.channels.empty() && spec.cable.present();
  b.supply();
  b.logic();
  b.switch_stage();
  b.coil();
  b.clamp();
  // Further channels: each built alone under its prefix, its parts then joined to the board. A
  // channel's name must not be a name of the board's ("switch": its nodes would read as the
  // first channel's Darlington's).
  std::set<std::string> taken;
  for (const auto& e : b.out.network.elements()) {
    taken.insert(e->name());
    taken.insert(e->terminals().begin(), e->terminals().end());
  }
  for (const auto& v : b.out.network.voltage_sources()) taken.insert(v.name);
  for (std::size_t k = 1; k <= spec.channels.size(); ++k) {
    const std::string& name = spec.channels[k - 1].name;
    for (const auto& t : taken) {
      if (t == name || t.rfind(name + ".", 0) == 0) {
        throw std::invalid_argument("channel '" + name + "': the name is a node or part name of the board; choose another");
      }
    }
    const DriverSpec one = channel_driver_spec(spec, k);
    Builder cb{one, parts, {}};
    cb.out.prefix = spec.channels[k - 1].name + ".";
    cb.shared_cable_core = b.shared_cable_core;
    try {
      cb.logic();
      cb.switch_stage();
      cb.coil();
      cb.clamp();
    } catch (const std::invalid_argument& e) {
      throw std::invalid_argument("channel '" + spec.channels[k - 1].name + "': " + e.what());
    }
    for (const auto& v : cb.out.network.voltage_sources()) b.out.network.add_voltage_source(v.name, v.node, v.voltage_V);
    for (const auto& e : cb.out.network.elements()) b.out.network.add(e);
    cb.out.network = engine::Network{};
    b.out.channels.push_back(std::move(cb.out));
  }
  b.common_clamp();
  b.common_cable_core();
  b.extra_parts();
  return std::move(b.out);
}


}  // namespace coilkick::drivers
