// libFuzzer target: small random networks (resistors, capacitors, coils, diodes, current
// sources, one supply) through the DC solver and a short transient with tight budgets. Every
// input must end in a result or an invalid_argument/SimulationError.
#include <cmath>
#include <cstdint>
#include <cstring>
#include <string>

#include "coilkick/devices/diode.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/transient.hpp"

namespace {
struct Reader {
  const uint8_t* p;
  size_t n;
  uint8_t byte() {
    if (n == 0) return 0;
    --n;
    return *p++;
  }
  // A value spread over decades: 10^(lo + byte·span/255).
  double decade(double lo, double span) { return std::pow(10.0, lo + span * byte() / 255.0); }
};
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace coilkick::engine;
  Reader r{data, size};
  Network net;
  try {
    const int nodes = 2 + r.byte() % 4;
    auto node = [&](int k) { return k == 0 ? Network::ground : "n" + std::to_string(k); };
    net.add_voltage_source("supply", node(1), Waveform::edge(0.0, r.decade(-1, 3), 1e-6, r.decade(-9, 3)));
    const int elements = 1 + r.byte() % 8;
    for (int e = 0; e < elements; ++e) {
      const std::string name = "e" + std::to_string(e);
      const std::string a = node(r.byte() % (nodes + 1)), b = node(r.byte() % (nodes + 1));
      switch (r.byte() % 5) {
        case 0: net.add_resistor(name, a, b, r.decade(-2, 8)); break;
        case 1: net.add_capacitor(name, a, b, r.decade(-12, 8)); break;
        case 2: net.add_coil(name, a, b, {r.decade(-4, 4), r.decade(-1, 4)}); break;
        case 3: {
          coilkick::devices::DiodeParameters p;
          p.breakdown_voltage_V = r.decade(0, 2);
          p.zero_bias_capacitance_F = r.decade(-13, 3);
          net.add(coilkick::devices::make_diode(name, a, b, p, r.byte() % 2 ? coilkick::devices::ModelLevel::physical
                                                                               : coilkick::devices::ModelLevel::pwl));
          break;
        }
        default: net.add_current_source(name, a, b, Waveform::constant(r.decade(-6, 5) * (r.byte() % 2 ? 1 : -1))); break;
      }
    }
    const Circuit c(net);
    const auto op = solve_operating_point(c, 0.0);
    TransientOptions o;
    o.stop_time_s = 1e-5;
    o.maximum_steps = 2000;
    o.maximum_wall_time_s = 1.0;
    (void)simulate(c, op, o);
  } catch (const std::invalid_argument&) {
  } catch (const SimulationError&) {
  }
  return 0;
}
