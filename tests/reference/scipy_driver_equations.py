"""The low-side NPN driver with a plain diode clamp, written out from the textbook device equations
(Ebers–Moll transport form, Ebers & Moll, Proc. IRE 42, 1954; Shockley diode law, Bell Syst. Tech.
J. 28, 1949) for the independent scipy references (test_scipy_reference.py, test_scipy_armature.py).
Nothing here is taken from the library; the library's runs override device charges and series
resistances to zero so both sides solve these equations."""
import numpy as np

K_OVER_Q = 1.380649e-23 / 1.602176634e-19  # 2019 SI, exact
VT = K_OVER_Q * (25.0 + 273.15)
VS, R_OUT, R_B, R_COIL, V_HIGH = 12.0, 50.0, 1e3, 400.0, 5.0
T_OFF, T_FALL, C_NODE, G_MIN = 100e-6, 10e-9, 1e-12, 1e-12
# npn_small_signal_40v (its Early effect pushed away) and rectifier_1a, by their catalogue names.
SWITCH_SATURATION_CURRENT_A, SWITCH_FORWARD_BETA, SWITCH_REVERSE_BETA = 1e-14, 200.0, 3.0
SWITCH_EARLY_VOLTAGE_V = 1e12
DIODE_SATURATION_CURRENT_A, DIODE_EMISSION_COEFFICIENT = 5e-9, 1.8

# The library-side overrides that make its switch and diode these equations.
SWITCH_OVERRIDES = {"collector_resistance": 0.0, "base_emitter_capacitance": 0.0, "base_collector_capacitance": 0.0,
                    "forward_transit_time": 0.0, "reverse_transit_time": 0.0, "forward_early_voltage": SWITCH_EARLY_VOLTAGE_V,
                    "collector_emitter_breakdown_voltage": 1e4}
DIODE_OVERRIDES = {"series_resistance": 0.0, "transit_time": 0.0, "zero_bias_capacitance": 0.0, "breakdown_voltage": 1e5}


def v_logic(t):
    if t <= T_OFF:
        return V_HIGH
    if t >= T_OFF + T_FALL:
        return 0.0
    return V_HIGH * (1.0 - (t - T_OFF) / T_FALL)


def currents(vb, vc):
    """Collector and base currents of the NPN (emitter grounded) and the clamp diode's current."""
    i_f = SWITCH_SATURATION_CURRENT_A * np.expm1(vb / VT)
    i_r = SWITCH_SATURATION_CURRENT_A * np.expm1((vb - vc) / VT)
    ic = (i_f - i_r) * (1.0 - (vb - vc) / SWITCH_EARLY_VOLTAGE_V) - i_r / SWITCH_REVERSE_BETA - G_MIN * (vb - vc) + G_MIN * vc
    ib = i_f / SWITCH_FORWARD_BETA + i_r / SWITCH_REVERSE_BETA + G_MIN * vb + G_MIN * (vb - vc)
    u = vc - VS
    i_d = DIODE_SATURATION_CURRENT_A * np.expm1(u / (DIODE_EMISSION_COEFFICIENT * VT)) + G_MIN * u
    return ic, ib, i_d
