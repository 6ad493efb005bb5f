#pragma once
// Copper winding resistance against temperature. IEC 60028 (International standard of
// resistance for copper): annealed copper at 20 °C has a temperature coefficient of resistance
// of 0.00393 per kelvin; R(T) = R20·(1 + 0.00393·(T − 20 °C)), and a resistivity of
// 1/58 Ω·mm²/m at 20 °C.

namespace coilkick::drivers {

constexpr double kCopperTemperatureCoefficient_per_K = 0.00393;  // IEC 60028, at 20 °C
constexpr double kCopperResistivity_ohm_m = 1e-6 / 58.0;          // IEC 60028, at 20 °C

inline double copper_resistance_ohm(double resistance_at_20C_ohm, double temperature_C,
                                    double coefficient_per_K = kCopperTemperatureCoefficient_per_K) {
  return resistance_at_20C_ohm * (1.0 + coefficient_per_K * (temperature_C - 20.0));
}

}  // namespace coilkick::drivers
