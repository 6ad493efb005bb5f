// The bundled demo. Scenario (invented demo values): the irrigation valve of a greenhouse
// controller, a 24 V solenoid of 48 ohm and 0.35 H, switched off by an ideal switch (fall in
// 100 ns) with an RC snubber of 220 ohm + 100 nF across the switch. Prints the peak switch
// voltage, when it occurs, the ringing and when the coil current falls below a release current
// of 20 % of the on-state current.
#include "demo.hpp"

#include <cmath>
#include <iomanip>

#include "coilkick/coilkick.hpp"

namespace coilkick::cli {

int run_demo(std::ostream& out) {
  using namespace coilkick::engine;
  const double supply_V = 24.0, coil_ohm = 48.0, coil_H = 0.35;
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(supply_V));
  net.add_coil("valve", "supply", "switch", {coil_H, coil_ohm});
  net.add_timed_switch("switch", "switch", Network::ground, {0.05, 1e9, 1e-3, 1e-7});
  net.add_resistor("snubber_resistor", "switch", "snubber_mid", 220.0);
  net.add_capacitor("snubber_capacitor", "snubber_mid", Network::ground, 100e-9);
  const Circuit circuit(net);

  const CircuitState on = solve_operating_point(circuit, 0.0);
  const double i0 = get_state(circuit, on, "valve.current");
  const double release_A = 0.2 * i0;
  TransientOptions opt;
  opt.stop_time_s = 12e-3;
  opt.relative_tolerance = 1e-7;
  const std::vector<EventSpec> events{
      EventSpec::maximum("peak", Probe::node_voltage(circuit, "switch"), 1e-3),
      EventSpec::crossing("release", Probe::state(circuit, "valve.current"), release_A,
                          Direction::falling, 1e-3)};
  const TransientResult r = simulate(circuit, on, opt, events);
  const auto& peak = r.event("peak");
  const auto& rel = r.event("release");

  out << "coilkick demo: greenhouse irrigation valve (24 V, 48 ohm, 0.35 H; demo values)\n"
      << "switched off at 1 ms by an ideal switch, RC snubber 220 ohm + 100 nF across it\n\n";
  out << std::setprecision(4);
  out << "  coil current at switch-off      " << i0 * 1e3 << " mA\n";
  out << "  peak switch voltage             " << peak.value << " V at "
      << (*peak.time_s - 1e-3) * 1e6 << " us after switch-off\n";
  if (rel.time_s) {
    out << "  current below " << release_A * 1e3 << " mA after     " << (*rel.time_s - 1e-3) * 1e3
        << " ms\n";
  }
  out << "  energy into snubber resistor    " << r.energy().channel_J("snubber_resistor.heat") * 1e3
      << " mJ\n";
  out << "  energy into coil winding        " << r.energy().channel_J("valve.winding") * 1e3
      << " mJ (includes the on-state ms)\n";
  out << "  energy balance error            " << r.energy().balance_error << "\n";
  out << "  solver: " << r.statistics().accepted_steps << " steps accepted, "
      << r.statistics().rejected_steps << " rejected\n\n";
  out << "Caution: a simulation is not a qualification. Drivers that switch mains loads through\n"
         "relays or contactors must be wired and checked by qualified people under local codes.\n";
  return 0;
}

}  // namespace coilkick::cli
