#!/usr/bin/python3
"""Random drivers at the edges of what a scenario allows, each run at the default integration
tolerances and at tight ones (relative 1e-9, 1 nV, 1 pA): the metrics a designer reads must not
depend on the defaults. Prints every driver whose metrics differ by more than the 0.1 % this
project holds itself to, and every run that ended in an error (with both runs' messages).

Drivers are drawn from a seed each (so any finding is rebuilt from its seed): topology and part,
supply 5–36 V, coil 10 Ω–3 kΩ and 1 mH–3 H (log-uniform), release at 10–60 % of the on-current,
drive edges 1 ns–1 µs, base/gate resistors, pull-ups, every clamp kind with random parts and
values, board stray capacitance 0–1 nF, sometimes winding capacitance and core loss, both device
levels. With --wiring, some drivers also get the supply's wiring (source resistance and
inductance, bulk capacitor and its ESR, a reverse-polarity diode) and a cable of 5–150 m to the
coil, drawn from a second generator so that the drivers without them stay the same. With --extras,
drawn from a third: further channels on the same board (their own coils, parts and edges, a
common clamp pin with a shared Zener or TVS), the armature model (data-sheet times and voltages
of a random relay or valve) or a PWM hold (pull-in by time or current, duty or average current);
every channel's metrics and the armature's and hold's are compared too. Invented values. Not a
test: a run of 600 drivers takes ~1.5 minutes on two cores (with --wiring, ~5; with --extras,
the armature's calibration makes it ~15).

    PYTHONPATH=build/python /usr/bin/python3 scripts/tolerance_campaign.py 0 600
    PYTHONPATH=build/python /usr/bin/python3 scripts/tolerance_campaign.py --wiring 0 300
    PYTHONPATH=build/python /usr/bin/python3 scripts/tolerance_campaign.py --extras 0 300
    PYTHONPATH=build/python /usr/bin/python3 scripts/tolerance_campaign.py --toml 211   # one driver as a scenario file
"""
import argparse
import json
import math
import random
import sys
from concurrent.futures import ProcessPoolExecutor

import coilkick
from coilkick import toml_text

SWITCHES = {"low_side_npn": ["npn_small_signal_40v", "npn_medium_power_80v"], "low_side_nmos": ["nmos_logic_level_60v"],
            "low_side_darlington": ["darlington_npn_100v"], "high_side_pnp": ["pnp_small_signal_40v"],
            "high_side_pmos": ["pmos_logic_level_60v"]}
DIODES = ["rectifier_1a", "small_signal_diode", "schottky_1a_40v"]
ZENERS = ["zener_500mw_%s" % v for v in ["5v1", "8v2", "12v", "15v", "24v", "33v", "47v"]]
TVS = ["tvs_400w_15v", "tvs_400w_24v", "tvs_400w_33v", "tvs_400w_47v"]
CLAMPS = ["none", "diode", "diode_zener", "diode_resistor", "rc_across_coil", "rc_across_switch", "tvs_across_switch", "active_clamp"]
METRICS = ["switch_voltage_peak_V", "coil_end_peak_V", "clamp_current_peak_A", "clamp_energy_J", "switch_energy_J",
           "coil_resistance_energy_J", "release_time_s", "current_decay_time_10pct_s", "switch_off_delay_s",
           "coil_current_at_switch_off_A", "switch_breakdown_energy_J", "supply_rail_peak_rise_V", "cable_energy_J"]
BOARD_METRICS = ["common_clamp_energy_J", "common_clamp_current_peak_A", "contact_open_time_s", "operate_time_s",
                 "armature_speed_at_contact_open_m_per_s", "hold_average_current_A", "hold_ripple_A", "hold_minimum_current_A",
                 "hold_clamp_energy_per_period_J", "hold_duty", "hold_pull_in_time_s"]
TIGHT = {"relative_tolerance": 1e-9, "voltage_tolerance": "1 nV", "current_tolerance": "1 pA"}
BAR = 1e-3


def log_uniform(r, a, b):
    return math.exp(r.uniform(math.log(a), math.log(b)))


def driver(seed, wiring=False):
    """The scenario (as a dict of the file's schema) of one seed."""
    r = random.Random(seed)
    topology = r.choice(list(SWITCHES))
    volts = r.choice([5, 12, 12, 24, 24, 36])
    ohms, henries = log_uniform(r, 10, 3000), log_uniform(r, 1e-3, 3.0)
    d = {"name": "campaign driver %d" % seed, "supply": {"voltage": "%g V" % volts},
         "drive": {"high_level": r.choice(["3.3 V", "5 V"]),
                   "switch_off_at": "%g s" % max(5 * henries / ohms, 1e-5) if r.random() < 0.3 else "1 ms",
                   "fall_time": "%g s" % log_uniform(r, 1e-9, 1e-6), "rise_time": "%g s" % log_uniform(r, 1e-9, 1e-6)},
         "coil": {"resistance": "%g ohm" % ohms, "inductance": "%g H" % henries,
                  "release_current": "%g A" % (r.uniform(0.1, 0.6) * volts / ohms)},
         "switch": {"topology": topology, "part": r.choice(SWITCHES[topology])},
         "clamp": {"kind": r.choice(CLAMPS), "diode_part": r.choice(DIODES), "zener_part": r.choice(ZENERS),
                   "tvs_part": r.choice(TVS), "active_clamp_zener_part": r.choice(ZENERS),
                   "resistor": "%g ohm" % log_uniform(r, 10, 2000), "snubber_resistance": "%g ohm" % log_uniform(r, 10, 2000),
                   "snubber_capacitance": "%g F" % log_uniform(r, 1e-9, 1e-6)},
         "analysis": {"device_models": r.choice(["physical", "piecewise_linear"])}}
    sw = d["switch"]
    if topology in ("low_side_nmos", "high_side_pmos"):
        sw["gate_resistor"] = "%g ohm" % log_uniform(r, 10, 10000)
    else:
        sw["base_resistor"] = "%g ohm" % log_uniform(r, 100, 20000)
    if topology.startswith("high_side"):
        sw["pullup_resistor"] = "%g ohm" % log_uniform(r, 1000, 100000)
        sw["level_shifter_part"] = "npn_small_signal_40v"
        sw["level_shifter_base_resistor"] = "%g ohm" % log_uniform(r, 1000, 47000)
    if r.random() < 0.3:
        sw["board_stray_capacitance"] = "%g F" % r.choice([0, 1e-12, 1e-10, 1e-9])
    if r.random() < 0.2:
        d["coil"]["core_loss_resistance"] = "%g ohm" % log_uniform(r, 100 * ohms, 1e5 * ohms)
    if r.random() < 0.2:
        d["coil"]["winding_capacitance"] = "%g F" % log_uniform(r, 1e-12, 1e-9)
    if wiring:
        w = random.Random(seed + 1_000_000)
        if w.random() < 0.5:
            d["supply"].update({"source_resistance": "%g ohm" % log_uniform(w, 0.01, 5.0),
                                "bulk_capacitance": "%g F" % log_uniform(w, 10e-6, 2e-3), "bulk_capacitor_esr": "%g ohm" % log_uniform(w, 0.005, 0.5)})
            if w.random() < 0.5:
                d["supply"]["source_inductance"] = "%g H" % log_uniform(w, 0.1e-6, 20e-6)
            if w.random() < 0.5:
                d["supply"]["reverse_polarity_diode_part"] = w.choice(DIODES)
        if w.random() < 0.5:
            d["cable"] = {"length": "%g m" % log_uniform(w, 5.0, 150.0)}
    return d


def add_extras(d, seed):
    """Further channels, the armature model or a PWM hold, from a third generator."""
    x = random.Random(seed + 2_000_000)
    kind = x.choice(["channels", "channels", "armature", "hold"])
    volts = float(d["supply"]["voltage"].split()[0])
    ohms = float(d["coil"]["resistance"].split()[0])
    henries = float(d["coil"]["inductance"].split()[0])
    if kind == "channels":
        if x.random() < 0.4 and d["switch"]["topology"].startswith("low_side"):
            d["clamp"]["kind"] = "common_pin"
            d["common_clamp"] = {"zener_part": x.choice(ZENERS + TVS)}
        d["channel"] = []
        for k in range(x.choice([1, 1, 2, 3])):
            c = {"name": "ch%d" % (k + 2)}
            if x.random() < 0.7:
                o, h = log_uniform(x, 10, 3000), log_uniform(x, 1e-3, 3.0)
                c["coil"] = {"resistance": "%g ohm" % o, "inductance": "%g H" % h,
                             "release_current": "%g A" % (x.uniform(0.1, 0.6) * volts / o)}
            if x.random() < 0.5:
                number, unit = d["drive"]["switch_off_at"].split()
                edge = float(number) * {"s": 1.0, "ms": 1e-3}[unit]
                c["drive"] = {"switch_off_at": "%g s" % (edge * (1 + x.choice([0, 1e-6, 1e-3, 0.1])))}
            d["channel"].append(c)
    elif kind == "armature":
        operate = x.uniform(0.5, 0.8) * volts
        d["coil"].pop("release_current", None)
        # At least an eighth of the operate voltage: the armature's travel needs that (a lower
        # one is refused before the run, relay_calibration.cpp).
        d["coil"]["release_voltage"] = "%g V" % (x.uniform(0.125, 0.4) * operate)
        d["coil"]["operate_voltage"] = "%g V" % operate
        tau = henries / ohms
        d["relay"] = {"armature_model": True, "nominal_voltage": "%g V" % volts,
                      "operate_time": "%g s" % (x.uniform(1.0, 3.0) * tau + 1e-3),
                      "release_time": "%g s" % (x.uniform(0.2, 1.0) * tau + 5e-4)}
        d["coil"].setdefault("core_loss_resistance", "%g ohm" % log_uniform(x, 100 * ohms, 1e4 * ohms))
    else:
        h = {"pwm_frequency": "%g Hz" % log_uniform(x, 1e3, 50e3)}
        h.update({"pull_in_time": "%g s" % (x.uniform(2, 5) * henries / ohms)} if x.random() < 0.5
                 else {"pull_in_current": "%g A" % (x.uniform(0.5, 0.9) * volts / ohms)})
        ceiling = float(h["pull_in_current"].split()[0]) if "pull_in_current" in h else volts / ohms
        h.update({"pwm_duty": "%g" % x.uniform(0.2, 0.8)} if x.random() < 0.5
                 else {"average_current": "%g A" % (x.uniform(0.2, 0.8) * ceiling)})
        d["hold"] = h
    return d


def metric_names(d):
    names = METRICS + BOARD_METRICS
    for c in d.get("channel", []):
        names = names + ["%s.%s" % (c["name"], k) for k in METRICS]
    return names


def run_both(seed, wiring=False, extras=False):
    d = driver(seed, wiring)
    if extras:
        d = add_extras(d, seed)
    out = {"seed": seed, "clamp": d["clamp"]["kind"], "topology": d["switch"]["topology"], "level": d["analysis"]["device_models"]}
    for tag, extra in (("default", {}), ("tight", TIGHT)):
        dd = json.loads(json.dumps(d))
        dd["analysis"].update(extra)
        try:
            m = coilkick.run(coilkick.scenario_from_dict(dd)).metrics
            out[tag] = {k: m.get(k) for k in metric_names(d)}
        except Exception as e:  # an error is a finding too: reported, not raised
            out[tag] = {"error": "%s: %s" % (type(e).__name__, str(e)[:300])}
    return out


def worst_difference(default, tight):
    """The metric that differs most, relative to the tight value (with a floor per unit: 1 mV,
    1 µA, a millionth of the run's energies, 1 ns), and that difference."""
    energy = sum(abs(tight[k]) for k in ("clamp_energy_J", "switch_energy_J", "coil_resistance_energy_J")
                 if tight[k] is not None and math.isfinite(tight[k]))
    worst = (0.0, "")
    for k, vt in tight.items():
        vd = default.get(k)
        if vt is None or vd is None:
            continue
        if math.isnan(vt) or math.isnan(vd):
            if math.isnan(vt) != math.isnan(vd):
                worst = max(worst, (math.inf, k))
            continue
        floor = 1e-3 if k.endswith("_V") else 1e-6 if k.endswith("_A") else max(1e-6 * energy, 1e-15) if k.endswith("_J") else 1e-9
        worst = max(worst, (abs(vd - vt) / max(abs(vt), floor), k))
    return worst


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("first", type=int, nargs="?", default=0)
    p.add_argument("last", type=int, nargs="?", default=600)
    p.add_argument("--toml", type=int, metavar="SEED", help="print the scenario file of one seed and stop")
    p.add_argument("--workers", type=int, default=2)
    p.add_argument("--wiring", action="store_true", help="supply wiring and cables too")
    p.add_argument("--extras", action="store_true", help="further channels, the armature model or a PWM hold too")
    a = p.parse_args()
    if a.toml is not None:
        d = driver(a.toml, a.wiring)
        print(toml_text.to_toml(add_extras(d, a.toml) if a.extras else d))
        return 0
    over, errors, count = [], [], 0
    with ProcessPoolExecutor(a.workers) as ex:
        for o in ex.map(run_both, range(a.first, a.last), [a.wiring] * (a.last - a.first),
                                [a.extras] * (a.last - a.first)):
            count += 1
            if "error" in o["default"] or "error" in o["tight"]:
                errors.append(o)
            else:
                diff, metric = worst_difference(o["default"], o["tight"])
                if diff > BAR:
                    over.append((diff, metric, o))
            if count % 50 == 0:
                print("%d of %d drivers" % (count, a.last - a.first), file=sys.stderr, flush=True)
    print("%d drivers: %d over the 0.1 %% bar, %d with an error" % (count, len(over), len(errors)))
    for diff, metric, o in sorted(over, key=lambda x: -x[0]):
        print("  seed %d (%s, %s, %s): %s default %.9g tight %.9g (%.2e)" % (
            o["seed"], o["topology"], o["clamp"], o["level"], metric, o["default"][metric], o["tight"][metric], diff))
    for o in errors:
        print("  seed %d (%s, %s, %s): error\n    default: %s\n    tight:   %s" % (
            o["seed"], o["topology"], o["clamp"], o["level"], o["default"].get("error", "ran"), o["tight"].get("error", "ran")))
    return 1 if over else 0


if __name__ == "__main__":
    sys.exit(main())
