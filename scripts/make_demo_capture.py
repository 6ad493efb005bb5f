#!/usr/bin/python3
"""Writes the demo bench captures of models/captures (demo data, invented). First
greenhouse_valve_switch_off.csv: demo data
(invented), the switch-off of the greenhouse valve (models/scenarios/greenhouse_valve.toml) as the
model shows it with known values that differ from the scenario's — as a coil on the bench differs
from its data sheet — recorded as a two-channel instrument would: the coil current as the voltage
of a 0.5 ohm shunt and the switch voltage through a 10:1 probe, 2 us per sample, Gaussian noise,
12-bit quantisation. Run from the project root with the package on PYTHONPATH:

    PYTHONPATH=build/python /usr/bin/python3 scripts/make_demo_capture.py

Second fan_relay_switch_on.csv: the switch-on of the fan relay (models/scenarios/fan_relay.toml)
with its armature, its current through a 10 ohm shunt, 5 us per sample, so that the armature's
flight shows as the dip in the current.

The known values are printed and written into each file's header, so a fit can be judged."""
import os
import sys

import numpy as np

import coilkick

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
OUT = os.path.join(ROOT, "models", "captures", "greenhouse_valve_switch_off.csv")
OUT_RELAY = os.path.join(ROOT, "models", "captures", "fan_relay_switch_on.csv")
TRUTH_RELAY = {"coil.inductance": 0.5, "coil.resistance": 305.0, "relay.operate_time": 6e-3}
RELAY_SHUNT_OHM = 10.0
RELAY_SAMPLE_S = 5e-6

TRUTH = {"coil.inductance": 0.38, "coil.core_loss_resistance": 6200.0, "relay.release_time": 5e-3}
SHUNT_OHM = 0.5
SAMPLE_S = 2e-6
SHUNT_NOISE_V, SHUNT_STEP_V = 0.6e-3, 0.8 / 4096      # ±0.4 V range at 12 bits
PROBE_NOISE_V, PROBE_STEP_V = 0.05, 100.0 / 4096      # 0..100 V range at 12 bits
SCOPE_CLOCK_S = 3.217e-3                               # the instrument's time of the edge


def main():
    # The known values as keys of the file itself (so that the armature's calibration takes them
    # in, as it does a coil's data-sheet values).
    path = os.path.join(ROOT, "models", "scenarios", "greenhouse_valve.toml")
    with open(path) as f:
        text = f.read()
    text = text.replace("[coil]\n", "[coil]\ninductance = %r\ncore_loss_resistance = %r\n"
                        % (TRUTH["coil.inductance"], TRUTH["coil.core_loss_resistance"]), 1)
    text = text.replace("[relay]\n", "[relay]\nrelease_time = %r\n" % TRUTH["relay.release_time"], 1)
    truth = coilkick._core.Scenario(text, path, "")
    t = np.arange(-1e-3, 7e-3, SAMPLE_S)
    trace = coilkick.model_trace(truth, "switch-off", t)
    rng = np.random.default_rng(20261202)
    shunt = trace.current_A.to_numpy() * SHUNT_OHM + rng.normal(0.0, SHUNT_NOISE_V, t.size)
    shunt = np.round(shunt / SHUNT_STEP_V) * SHUNT_STEP_V
    probe = trace.voltage_V.to_numpy() + rng.normal(0.0, PROBE_NOISE_V, t.size)
    probe = np.round(probe / PROBE_STEP_V) * PROBE_STEP_V
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, "w") as f:
        f.write("# demo data (invented): switch-off of the greenhouse valve coil, written by scripts/make_demo_capture.py\n")
        f.write("# known values: " + ", ".join("%s = %g" % kv for kv in TRUTH.items()) + " (SI units)\n")
        f.write("# current as the voltage of a %g ohm shunt, switch voltage through a 10:1 probe, 12-bit samples every %g s\n"
                % (SHUNT_OHM, SAMPLE_S))
        f.write("time [s],shunt [mV],switch [V]\n")
        for tk, a, b in zip(t + SCOPE_CLOCK_S, shunt, probe):
            f.write("%.7e,%.4f,%.3f\n" % (tk, a * 1e3, b))
    print("wrote %s (%d samples); known values: %s" % (OUT, t.size, TRUTH))
    relay_capture(rng)


def relay_capture(rng):
    path = os.path.join(ROOT, "models", "scenarios", "fan_relay.toml")
    with open(path) as f:
        text = f.read()
    text = text.replace("[coil]\n", "[coil]\ninductance = %r\nresistance = %r\n"
                        % (TRUTH_RELAY["coil.inductance"], TRUTH_RELAY["coil.resistance"]), 1)
    text = text.replace("[relay]\n", "[relay]\noperate_time = %r\n" % TRUTH_RELAY["relay.operate_time"], 1)
    truth = coilkick._core.Scenario(text, path, "")
    t = np.arange(-1e-3, 14e-3, RELAY_SAMPLE_S)
    trace = coilkick.model_trace(truth, "switch-on", t)
    shunt = trace.current_A.to_numpy() * RELAY_SHUNT_OHM + rng.normal(0.0, 2e-3, t.size)  # 2 mV: 0.2 mA
    shunt = np.round(shunt / SHUNT_STEP_V) * SHUNT_STEP_V
    probe = trace.voltage_V.to_numpy() + rng.normal(0.0, PROBE_NOISE_V, t.size)
    probe = np.round(probe / PROBE_STEP_V) * PROBE_STEP_V
    with open(OUT_RELAY, "w") as f:
        f.write("# demo data (invented): switch-on of the greenhouse fan relay coil, written by scripts/make_demo_capture.py\n")
        f.write("# known values: " + ", ".join("%s = %g" % kv for kv in TRUTH_RELAY.items()) + " (SI units)\n")
        f.write("# current as the voltage of a %g ohm shunt, switch voltage through a 10:1 probe, 12-bit samples every %g s\n"
                % (RELAY_SHUNT_OHM, RELAY_SAMPLE_S))
        f.write("time [s],shunt [mV],switch [V]\n")
        for tk, a, b in zip(t + 0.5e-3, shunt, probe):
            f.write("%.7e,%.4f,%.3f\n" % (tk, a * 1e3, b))
    print("wrote %s (%d samples); known values: %s" % (OUT_RELAY, t.size, TRUTH_RELAY))


if __name__ == "__main__":
    sys.exit(main())
