// libFuzzer target: arbitrary bytes as a scenario file through the reader and the driver
// builder. Every input must end in a Scenario or a ScenarioError/invalid_argument — never a
// crash, a hang, a leak or undefined behaviour (built with ASan + UBSan).
#include <cstdint>
#include <string>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/scenario/scenario.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  static const coilkick::catalogue::Catalogue parts = coilkick::catalogue::load_default_catalogue();
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const auto s = coilkick::scenario::read_scenario_text(text, "fuzz.toml", parts);
    const auto built = coilkick::drivers::build_driver_network(s.driver, parts);
    const coilkick::engine::Circuit c(built.network);
    (void)c.state_count();
  } catch (const std::invalid_argument&) {
    // the expected outcome for bad input
  }
  return 0;
}
