// An outside program linking the installed library: RL decay into a resistor.
#include <cmath>
#include <iostream>

#include "coilkick/coilkick.hpp"

int main() {
  using namespace coilkick::engine;
  Network net;
  net.add_coil("coil", "a", Network::ground, {0.1, 10.0});
  net.add_resistor("load", "a", Network::ground, 90.0);
  Circuit c(net);
  CircuitState s = zero_state(c, 0.0);
  set_state(c, s, "coil.current", 1.0);
  TransientOptions o;
  o.stop_time_s = 1e-3;
  const auto r = simulate(c, s, o);
  const double expect = std::exp(-1e-3 * 100.0 / 0.1);  // τ = L/(R + R_load)
  const double got = r.state("coil.current")[r.times_s().size() - 1];
  if (std::abs(got - expect) > 1e-4 * expect) {
    std::cout << "consumer wrong: " << got << " vs " << expect << "\n";
    return 1;
  }
  std::cout << "consumer ok\n";
  return 0;
}
