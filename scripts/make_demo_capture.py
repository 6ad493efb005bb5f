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
SHUNT_STEP_V = 0.8 / 4096                              # ±0.4 V range at 12 bits
PROBE_NOISE_V, PROBE_STEP_V = 0.05, 100.0 / 4096      # 0..100 V range at 12 bits

CAPTURES = [
    dict(file="greenhouse_valve_switch_off.csv", scenario="greenhouse_valve.toml", edge="switch-off",
         what="switch-off of the greenhouse valve coil",
         truth={"coil.inductance": 0.38, "coil.core_loss_resistance": 6200.0, "relay.release_time": 5e-3},
         shunt_ohm=0.5, shunt_noise_V=0.6e-3, sample_s=2e-6, span_s=(-1e-3, 7e-3), clock_s=3.217e-3),
    dict(file="fan_relay_switch_on.csv", scenario="fan_relay.toml", edge="switch-on",
         what="switch-on of the greenhouse fan relay coil",
         truth={"coil.inductance": 0.5, "coil.resistance": 305.0, "relay.operate_time": 6e-3},
         shunt_ohm=10.0, shunt_noise_V=2e-3, sample_s=5e-6, span_s=(-1e-3, 14e-3), clock_s=0.5e-3),
]


def truth_scenario(name, truth):
    """The scenario file with the known values as keys of its own [coil] and [relay] tables (so
    that the armature's calibration takes them in, as it does a coil's data-sheet values)."""
    path = os.path.join(ROOT, "models", "scenarios", name)
    with open(path) as f:
        text = f.read()
    for table in ("coil", "relay"):
        lines = "".join("%s = %r\n" % (k.split(".", 1)[1], v) for k, v in truth.items() if k.startswith(table + "."))
        text = text.replace("[%s]\n" % table, "[%s]\n%s" % (table, lines), 1)
    return coilkick._core.Scenario(text, path, "")


def write_capture(c, rng):
    t = np.arange(c["span_s"][0], c["span_s"][1], c["sample_s"])
    trace = coilkick.model_trace(truth_scenario(c["scenario"], c["truth"]), c["edge"], t)
    shunt = trace.current_A.to_numpy() * c["shunt_ohm"] + rng.normal(0.0, c["shunt_noise_V"], t.size)
    shunt = np.round(shunt / SHUNT_STEP_V) * SHUNT_STEP_V
    probe = trace.voltage_V.to_numpy() + rng.normal(0.0, PROBE_NOISE_V, t.size)
    probe = np.round(probe / PROBE_STEP_V) * PROBE_STEP_V
    out = os.path.join(ROOT, "models", "captures", c["file"])
    os.makedirs(os.path.dirname(out), exist_ok=True)
    with open(out, "w") as f:
        f.write("# demo data (invented): %s, written by scripts/make_demo_capture.py\n" % c["what"])
        f.write("# known values: " + ", ".join("%s = %g" % kv for kv in c["truth"].items()) + " (SI units)\n")
        f.write("# current as the voltage of a %g ohm shunt, switch voltage through a 10:1 probe, 12-bit samples every %g s\n"
                % (c["shunt_ohm"], c["sample_s"]))
        f.write("time [s],shunt [mV],switch [V]\n")
        for tk, a, b in zip(t + c["clock_s"], shunt, probe):
            f.write("%.7e,%.4f,%.3f\n" % (tk, a * 1e3, b))
    print("wrote %s (%d samples); known values: %s" % (out, t.size, c["truth"]))


def main():
    rng = np.random.default_rng(20261202)
    for c in CAPTURES:
        write_capture(c, rng)


if __name__ == "__main__":
    sys.exit(main())
