"""Bad inputs through the command and through Python: each gives one clear message naming the
field (and for files the line), exit code 2 from the command, a ValueError subclass in Python —
never a crash, a hang or a silent number."""
import math
import os
import subprocess

import pytest

import coilkick

BASE = [
    'name = "bad input base"',        # 1
    "[supply]",                       # 2
    'voltage = "12 V"',               # 3
    "[drive]",                        # 4
    'high_level = "5 V"',             # 5
    'switch_off_at = "100 us"',       # 6
    "[coil]",                         # 7
    'resistance = "400 ohm"',         # 8
    'inductance = "600 mH"',          # 9
    'release_current = "3 mA"',       # 10
    "[switch]",                       # 11
    'topology = "low_side_npn"',      # 12
    'part = "npn_small_signal_40v"',  # 13
    'base_resistor = "1 kohm"',       # 14
    "[clamp]",                        # 15
    'kind = "diode_zener"',           # 16
    'diode_part = "rectifier_1a"',    # 17
    'zener_part = "zener_500mw_15v"', # 18
    "[analysis]",                     # 19
    'model_level = "pwl"',            # 20
]

# (what, line to replace (0: append), new text, line the message names, part of the message)
FILE_ROWS = [
    ("TOML syntax", 2, "[supply", 2, "TOML syntax"),
    ("unknown section", 2, "[suply]", 2, "did you mean 'supply'"),
    ("unknown key", 9, 'inductnce = "600 mH"', 9, "did you mean 'coil.inductance'"),
    ("missing supply voltage", 3, "", 2, "supply.voltage': is required"),
    ("missing topology", 12, "", 11, "switch.topology': is required"),
    ("missing part", 13, "", 11, "switch.part': is required"),
    ("missing clamp kind", 16, "", 15, "clamp.kind': is required"),
    ("capacitance for an inductance", 9, 'inductance = "30 pF"', 9, "is a capacitance, but an inductance"),
    ("henry for a capacitance", 0, '[coil.more]', 21, "unknown key"),
    ("unknown unit", 9, 'inductance = "550 mX"', 9, "unknown unit"),
    ("not a number", 3, 'voltage = "twelve V"', 3, "does not start with a number"),
    ("NaN string", 3, 'voltage = "nan V"', 3, "not a finite number"),
    ("infinity string", 3, 'voltage = "inf V"', 3, "not a finite number"),
    ("TOML nan", 3, "voltage = nan", 3, "must be a finite number"),
    ("negative inductance", 9, 'inductance = "-1 H"', 9, "coil.inductance must be finite and > 0"),
    ("zero inductance", 9, "inductance = 0", 9, "coil.inductance must be finite and > 0"),
    ("zero resistance", 8, "resistance = 0", 8, "coil.resistance must be finite and > 0"),
    ("huge voltage", 3, 'voltage = "1e300 V"', 3, "must be at most"),
    ("huge inductance", 9, 'inductance = "5 kH"', 9, "must be at most"),
    ("boolean for a voltage", 3, "voltage = true", 3, "must be a number or a quantity string"),
    ("array for a voltage", 3, "voltage = [12]", 3, "not an array"),
    ("number for a topology", 12, "topology = 5", 12, "must be a string"),
    ("unknown topology", 12, 'topology = "low_side_npm"', 12, "did you mean 'low_side_npn'"),
    ("unknown clamp kind", 16, 'kind = "diode_zenner"', 16, "did you mean 'diode_zener'"),
    ("clamp kind like none of them", 16, 'kind = "zener_only"', 16, "(one of: none, diode, diode_zener,"),
    ("unknown switch part", 13, 'part = "npn_small_signal_40"', 13, "did you mean 'npn_small_signal_40v'"),
    ("part of the wrong family", 13, 'part = "zener_500mw_12v"', 13, "does not fit topology"),
    ("unknown Zener part", 18, 'zener_part = "zener_500mw_17v"', 18, "no part named 'zener_500mw_17v'"),
    ("unknown coil part", 8, 'part = "greenhouse_valve"', 8, "did you mean 'greenhouse_valve_24v'"),
    ("override of an unknown parameter", 0, "[switch.overrides]\nforward_bet = 150", 22, "did you mean 'forward_beta'"),
    ("override with a wrong unit", 0, '[clamp.zener.overrides]\nbreakdown_voltage = "20 A"', 22, "is a current, but a voltage"),
    ("override out of range", 0, "[switch.overrides]\nforward_beta = -5", 22, "forward_beta"),
    ("release current and voltage", 10, 'release_current = "3 mA"\nrelease_voltage = "1 V"', 10, "not both"),
    ("stop before switch-off", 0, 'stop_time = "50 us"', 21, "analysis.stop_time must be after the end of the drive's switch-off edge"),
    ("a rectifier as the Zener", 18, 'zener_part = "rectifier_1a"', 18, "is a diode; a Zener or TVS is needed here"),
    ("a Zener as the clamp diode", 17, 'diode_part = "zener_500mw_12v"', 17, "is a zener; a diode is needed here"),
    ("Zener clamp without Zener", 18, "", 15, "clamp.zener_part': is required"),
    ("resistor clamp without resistor", 16, 'kind = "diode_resistor"', 15, "clamp.resistor': is required"),
    ("high side without pull-up", 12, 'topology = "high_side_pnp"', 11, "switch.pullup_resistor': is required"),
    ("key twice", 0, 'model_level = "pwl"', 21, "TOML syntax"),
    ("unknown model level", 20, 'model_level = "fast"', 20, 'device models must be "physical" or "piecewise_linear"'),
    ("tolerance without its pair", 0, '[tolerances]\ncoil_temperature_min = "-10 degC"', 22, "give both"),
    ("spread out of range", 0, '[tolerances]\ncoil_resistance = "60 %"', 22, "relative spread"),
    ("temperature out of range", 0, 'device_temperature = "500 degC"', 21, "analysis.device_temperature must be inside"),
    ("armature model without its data", 0, "[relay]\narmature_model = true", 22, "the armature model needs coil.operate_voltage"),
    ("time for a length", 0, '[relay]\ncontact_gap = "0.4 ms"', 22, "is a time, but a length"),
    ("negative over-travel", 0, '[relay]\nover_travel = "-0.1 mm"', 22, "relay.over_travel must be inside"),
    ("misspelt relay key", 0, "[relay]\narmature = true", 22, "did you mean 'relay.armature_model'"),
    ("relay data no armature can meet", 10, 'release_voltage = "0.1 V"\noperate_voltage = "8.4 V"\n[relay]\n'
     'armature_model = true\noperate_time = "8 ms"\nrelease_time = "2 ms"', 13, "is too low against coil.operate_voltage"),
]


def text_of(row):
    lines = list(BASE)
    _, line, new, _, _ = row
    if line > 0:
        lines[line - 1] = new
    else:
        lines.append(new)
    return "\n".join(lines) + "\n"


def test_there_are_at_least_forty_bad_file_inputs():
    assert len(FILE_ROWS) >= 40


@pytest.mark.parametrize("row", FILE_ROWS, ids=[r[0] for r in FILE_ROWS])
def test_bad_file_through_the_command_and_python(row, tmp_path, program):
    path = tmp_path / "bad.toml"
    path.write_text(text_of(row))
    out = subprocess.run([program, "run", str(path)], capture_output=True, text=True, timeout=60)
    assert out.returncode == 2, out.stderr
    message = out.stderr.strip().splitlines()[-1]
    assert message.startswith("coilkick: %s:%d:" % (path, row[3])), message
    assert row[4] in message
    with pytest.raises(coilkick.ScenarioError) as e:
        coilkick.load_scenario(path)
    assert str(e.value) == message[len("coilkick: "):]  # the same words in Python


def valid_dict(supply_voltage="12 V"):
    return {
        "supply": {"voltage": supply_voltage}, "coil": {"resistance": "400 ohm", "inductance": "600 mH", "release_current": "3 mA"},
        "switch": {"topology": "low_side_npn", "part": "npn_small_signal_40v", "base_resistor": "1 kohm"},
        "clamp": {"kind": "diode", "diode_part": "rectifier_1a"}, "analysis": {"model_level": "pwl"}}


def valid():
    return coilkick.scenario_from_dict(valid_dict())


API_ROWS = [
    ("unreadable file", lambda: coilkick.load_scenario("/nonexistent/nowhere.toml"), "cannot open"),
    ("directory as a file", lambda: coilkick.load_scenario("/"), "cannot open"),
    ("dict with an unknown section", lambda: coilkick.scenario_from_dict({"suply": {}}), "did you mean 'supply'"),
    ("dict with a NaN value", lambda: coilkick.scenario_from_dict({"supply": {"voltage": math.nan}}), "not a finite number"),
    ("unknown part", lambda: coilkick.part_info("rectifier_2a"), "did you mean"),
    ("with_value on an unknown key", lambda: valid().with_value("coil.inductanse", 1.0), "did you mean 'coil.inductance'"),
    ("with_value NaN", lambda: valid().with_value("coil.inductance", math.nan), "must be finite"),
    ("with_value negative inductance", lambda: valid().with_value("coil.inductance", -1.0), "inductance_H"),
    ("span with count 0", lambda: coilkick.span(0.1, 1.0, 0), "count: must be from 1 to 100000"),
    ("sweep over an unknown key", lambda: coilkick.sweep(valid(), {"coil.inductanse": coilkick.span(0.1, 1.0, 2)}),
     "did you mean 'coil.inductance'"),
    ("sweep with a NaN value", lambda: coilkick.sweep(valid(), {"coil.inductance": [0.3, math.nan]}),
     "key 'coil.inductance': every value must be a finite number"),
    ("sweep of 10^9 points", lambda: coilkick.sweep(valid(), {"coil.inductance": coilkick.span(0.1, 1.0, 100000),
                                                              "supply.voltage": coilkick.span(10, 14, 10000)}),
     "more than 1000000 grid points"),
    ("an empty list of values", lambda: coilkick.sweep(valid(), {"coil.inductance": []}), "the list of values is empty"),
    ("tolerance with negative samples", lambda: coilkick.tolerance(valid(), samples=-1), "samples: must be from 0"),
    ("tolerance with 10^9 samples", lambda: coilkick.tolerance(valid(), samples=10 ** 9), "samples: must be from 0 to 10000000"),
    ("tolerance with a negative seed", lambda: coilkick.tolerance(valid(), seed=-1), "seed: must be from 0"),
    ("an empty scenario dict", lambda: coilkick.scenario_from_dict({}), "key 'supply.voltage': is required"),
    ("a huge integer in a dict", lambda: coilkick.scenario_from_dict(valid_dict(10 ** 30)),
     "key 'supply.voltage': supply.voltage must be at most"),
    ("suggest with a negative limit", lambda: coilkick.suggest(valid(), -1e-3, 40.0), "max-release-time"),
    ("compare with an unknown kind", lambda: coilkick.compare(valid(), ["zener_only"]), "unknown clamp kind"),
]


@pytest.mark.parametrize("row", API_ROWS, ids=[r[0] for r in API_ROWS])
def test_bad_api_calls_raise_value_errors_naming_the_field(row):
    with pytest.raises(ValueError) as e:
        row[1]()
    assert row[2] in str(e.value)


TYPE_ROWS = [
    ("no scenario", lambda: coilkick.run(None), "scenario: expected a coilkick scenario"),
    ("a dict instead of a scenario", lambda: coilkick.sweep({}, {"coil.inductance": [0.3]}), "scenario: expected a coilkick scenario"),
    ("a tuple axis", lambda: coilkick.sweep(valid(), {"coil.inductance": (0.1, 1.0, 3)}), "a tuple is ambiguous"),
    ("a non-integer count", lambda: coilkick.span(0.1, 1.0, 2.5), "count: expected a whole number"),
    ("a string as values", lambda: coilkick.sweep(valid(), {"coil.inductance": "0.3"}), "expected coilkick.span"),
    ("samples not a whole number", lambda: coilkick.tolerance(valid(), samples=2.5), "samples: expected a whole number"),
    ("not an executor", lambda: coilkick.tolerance(valid(), executor=object()), "executor: expected an object with submit()"),
    ("a scenario that is not a dict", lambda: coilkick.scenario_from_dict(None), "a scenario must be a dict"),
]


@pytest.mark.parametrize("row", TYPE_ROWS, ids=[r[0] for r in TYPE_ROWS])
def test_api_misuse_raises_type_errors_naming_the_argument(row):
    with pytest.raises(TypeError) as e:
        row[1]()
    assert row[2] in str(e.value)


def test_a_huge_sweep_is_refused_before_any_grid_is_built():
    # The command refuses more than 1,000,000 points at once; so does Python, without building the 10^9 grid.
    import time
    t0 = time.perf_counter()
    with pytest.raises(ValueError, match="more than 1000000 grid points"):
        coilkick.sweep(valid(), {"coil.inductance": coilkick.span(0.1, 1.0, 100000), "supply.voltage": coilkick.span(10, 14, 10000)})
    assert time.perf_counter() - t0 < 1.0


def test_result_arrays_are_read_only_views():
    r = coilkick.run(valid())
    for name in ("time_s", "switch_voltage_V", "coil_current_A", "clamp_current_A"):
        a = getattr(r, name)
        assert not a.flags.writeable
        with pytest.raises(ValueError):
            a[0] = 1.0


def test_a_sweep_point_with_a_bad_value_reports_its_error_and_the_others_complete():
    df = coilkick.sweep(valid(), {"coil.inductance": [-1.0, 0.3]})
    assert df["overall"].iloc[0] == "error" and "coil.inductance must be finite" in df["error"].iloc[0]
    assert df["error"].iloc[1] == "" and math.isfinite(df["release_time_s"].iloc[1])


def test_a_solver_failure_is_an_error_not_a_result(tmp_path, program):
    path = tmp_path / "slow.toml"
    path.write_text(text_of((None, 0, 'maximum_wall_time = "1 us"', 0, None)))
    out = subprocess.run([program, "run", str(path)], capture_output=True, text=True, timeout=60)
    assert out.returncode == 3
    assert "wall-time budget" in out.stderr
    with pytest.raises(coilkick.SimulationError, match="wall-time budget"):
        coilkick.run(coilkick.load_scenario(path))
