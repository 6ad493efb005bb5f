// libFuzzer target: arbitrary bytes as a bench capture through the CSV reader (scenario/capture),
// with a shunt, units and time zero at the switch-voltage edge, then the capture's edge and noise
// as a fit reads them (analyses/fit). Every input must end in a Capture or an invalid_argument —
// never a crash, a hang, a leak or undefined behaviour (built with ASan + UBSan).
#include <cstdint>
#include <string>

#include "coilkick/analyses/fit.hpp"
#include "coilkick/scenario/capture.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  coilkick::scenario::CaptureOptions o;
  o.channels = {{"current", "2"}, {"voltage", "3"}};
  o.units = {{"2", "mV"}};
  o.shunt_resistance_ohm = 0.5;
  o.time_zero = (size % 2) ? coilkick::scenario::CaptureTimeZero::switch_voltage_edge : coilkick::scenario::CaptureTimeZero::as_recorded;
  try {
    const auto c = coilkick::scenario::read_capture_text(text, "fuzz.csv", o);
    (void)coilkick::analyses::capture_edge(c);
    (void)coilkick::analyses::current_noise_before_edge_A(c);
    (void)coilkick::analyses::find_armature_motion(c.time_s, c.current_A, 1e-3);
  } catch (const std::invalid_argument&) {
    // the expected outcome for bad input
  }
  return 0;
}
