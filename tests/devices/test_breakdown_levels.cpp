// Both model levels clamp at the same voltage: for every part with a breakdown in the catalogue
// (Zener, TVS, rectifier, transistor avalanche), the pwl breakdown line is the tangent of the
// physical curve at its reference current, so at that current the two voltages are equal, and at
// x times it the line lies n_b·V_T·(x − 1 − ln x) above the curve (docs/derivations.md, "pwl
// breakdown line").
#include <doctest/doctest.h>

#include <cmath>
#include <algorithm>
#include <functional>
#include <memory>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/junction.hpp"
#include "coilkick/devices/mosfet.hpp"

using namespace coilkick;

namespace {

// Voltage at which the increasing current function reaches `current_A` (bisection to 1e-12 V).
double voltage_at(const std::function<double(double)>& current_at, double current_A, double hi_V) {
  double lo = 0.0, hi = hi_V;
  while (current_at(hi) < current_A) hi *= 2.0;
  for (int k = 0; k < 200 && hi - lo > 1e-12; ++k) {
    const double m = 0.5 * (lo + hi);
    (current_at(m) < current_A ? lo : hi) = m;
  }
  return 0.5 * (lo + hi);
}

struct Levels {
  std::function<double(double)> physical, pwl;  // breakdown current at a blocking voltage
  double breakdown_V, emission_voltage_V;
  double leakage_A = 0.0;           // the junction's reverse saturation current (diodes)
  double dynamic_resistance_ohm = 0.0;
};

template <class Physical, class Pwl, class P>
Levels three_terminal(const P& p, double breakdown_V, double knee_emission) {
  // Control terminal tied to the low terminal (base to emitter, gate to source): the part blocks.
  const double sg = p.polarity == devices::Polarity::n ? 1.0 : -1.0;
  auto phys = std::make_shared<Physical>("q", "c", "b", "e", p);
  auto lin = std::make_shared<Pwl>("q", "c", "b", "e", p);
  auto at = [sg](auto dev) {
    return [sg, dev](double u) {
      const double v[3] = {sg * u, 0.0, 0.0};
      double i[3];
      dev->currents(v, i);
      return sg * i[0];
    };
  };
  return {at(phys), at(lin), breakdown_V, knee_emission * devices::thermal_voltage_V(p.temperature_C)};
}

Levels levels_of(const catalogue::PartRecord& rec, double reference_A) {
  const catalogue::Overrides o{{"pwl_breakdown_reference_current", reference_A}};
  if (rec.family == "diode" || rec.family == "zener" || rec.family == "tvs") {
    const auto p = catalogue::diode_parameters(rec, o);
    auto phys = std::make_shared<devices::PhysicalDiode>("d", "a", "k", p);
    auto lin = std::make_shared<devices::PwlDiode>("d", "a", "k", p);
    auto at = [](auto dev) {
      return [dev](double u) {  // reverse voltage u: cathode above anode
        const double v[2] = {0.0, u};
        double i[2];
        dev->currents(v, i);
        return -i[0];
      };
    };
    return {at(phys), at(lin), p.breakdown_voltage_V,
            p.breakdown_knee_emission_coefficient * devices::thermal_voltage_V(p.temperature_C), p.saturation_current_A,
            p.breakdown_dynamic_resistance_ohm};
  }
  if (rec.family == "npn" || rec.family == "pnp") {
    const auto p = catalogue::bjt_parameters(rec, o);
    return three_terminal<devices::PhysicalBjt, devices::PwlBjt>(p, p.collector_emitter_breakdown_voltage_V,
                                                                 p.breakdown_knee_emission_coefficient);
  }
  const auto p = catalogue::mosfet_parameters(rec, o);
  return three_terminal<devices::PhysicalMosfet, devices::PwlMosfet>(p, p.drain_source_breakdown_voltage_V,
                                                                     p.breakdown_knee_emission_coefficient);
}

}  // namespace

TEST_CASE("every part with a breakdown: pwl and physical clamp at the same voltage at the reference current") {
  const auto parts = catalogue::load_default_catalogue();
  int checked = 0;
  for (const auto& name : parts.names()) {
    const auto& rec = parts.part(name);
    static const std::vector<std::string> families{"diode", "zener", "tvs", "npn", "pnp", "nmos", "pmos"};
    if (std::find(families.begin(), families.end(), rec.family) == families.end()) continue;
    for (const double ref : {0.01, 0.1, 1.0}) {
      const Levels l = levels_of(rec, ref);
      if (!std::isfinite(l.breakdown_V)) continue;
      CAPTURE(name);
      CAPTURE(ref);
      const double at_ref_physical = voltage_at(l.physical, ref, l.breakdown_V);
      const double at_ref_pwl = voltage_at(l.pwl, ref, l.breakdown_V);
      // Tangent point: equal up to the bisection and the parallel leakage (1e-12 S) — 1 µV — and
      // the junction's reverse saturation current, which the physical curve carries besides its
      // breakdown branch and the pwl line leaves out: it shifts the curve by at most
      // I_s·(n_b·V_T/I + r_b) (a Schottky-class part's 0.4 µA: ~2e-5 V at 10 mA).
      const auto shift = [&](double current) { return l.leakage_A * (l.emission_voltage_V / current + l.dynamic_resistance_ohm); };
      CHECK(std::abs(at_ref_pwl - at_ref_physical) < 1e-6 + shift(ref));
      // Half and twice the reference: the line lies above the curve by n_b·V_T·(x − 1 − ln x).
      for (const double x : {0.5, 2.0}) {
        const double above = voltage_at(l.pwl, x * ref, l.breakdown_V) - voltage_at(l.physical, x * ref, l.breakdown_V);
        const double expect = l.emission_voltage_V * (x - 1.0 - std::log(x));
        CAPTURE(x);
        CHECK(std::abs(above - expect) < 1e-6 + 1e-6 * expect + 2.0 * shift(std::min(x, 1.0) * ref));
      }
      ++checked;
    }
  }
  CHECK(checked >= 3 * 20);  // the E24 Zeners, the TVS series and the switches
}
