"""Fits from Python (coilkick.read_capture, fit, model_trace, plot.overlay) on the demo capture
models/captures/greenhouse_valve_switch_off.csv (demo data, invented: scripts/make_demo_capture.py
wrote it from known values with noise, 12-bit steps and a 0.5 ohm shunt). The fit must find the
known values within 3 of its standard errors and equal the command's numbers."""
import json
import os
import re
import subprocess
import tomllib

import numpy as np
import pandas as pd
import pytest

import coilkick

from conftest import MODELS

CAPTURE = os.path.join(MODELS, "captures", "greenhouse_valve_switch_off.csv")


def known_values():
    with open(CAPTURE) as f:
        line = next(l for l in f if l.startswith("# known values: "))
    items = line[len("# known values: "):line.index(" (SI units)")].split(", ")
    return {k.strip(): float(v) for k, v in (i.split("=") for i in items)}


@pytest.fixture(scope="module")
def demo_fit():
    valve = coilkick.load_scenario(os.path.join(MODELS, "scenarios", "greenhouse_valve.toml"))
    capture = coilkick.read_capture(CAPTURE, shunt_ohm=0.5)
    return valve, capture, coilkick.fit(valve, capture, capture_name="greenhouse_valve_switch_off.csv")


def test_read_capture_gives_a_frame_in_si_units(demo_fit):
    _, capture, _ = demo_fit
    assert list(capture.columns) == ["time_s", "current_A", "voltage_V"]
    assert len(capture) == 4001
    # 215.4297 mV on the 0.5 ohm shunt in the first data row: 0.4308594 A.
    assert capture.current_A.iloc[0] == pytest.approx(0.2154297 / 0.5, rel=1e-12)
    assert np.all(np.diff(capture.time_s) > 0)


def test_fit_finds_the_known_values_and_equals_the_command(demo_fit, program):
    valve, _, f = demo_fit
    known = known_values()
    assert set(f.parameters.key) == set(known)
    for row in f.parameters.itertuples():
        assert abs(row.value - known[row.key]) < 3 * row.standard_error, row.key
        assert row.determined
    assert f.edge == "switch-off"
    assert abs(f.residual_rms - 1.0) < 0.1  # weighted by the noise: ~1 (see tests/cli/test_fit_command.cpp)
    assert list(f.frame.columns) == ["time_after_edge_s", "measured_current_A", "model_current_A", "residual"]
    out = subprocess.run([program, "fit", valve.source_name, "--capture", CAPTURE, "--shunt", "0.5 ohm", "--json", "--quiet"],
                         capture_output=True, text=True, check=True)
    cli = {p["key"]: p for p in json.loads(out.stdout)["parameters"]}
    for row in f.parameters.itertuples():
        # The same computation on the same numbers: equal through JSON's round-trip digits.
        assert cli[row.key]["value"] == row.value
        assert cli[row.key]["standard_error"] == row.standard_error


def test_coil_record_is_toml_with_unit_and_source(demo_fit):
    _, _, f = demo_fit
    record = tomllib.loads(f.coil_record("valve_on_the_bench", date="2026-12-02"))
    part = record["part"][0]
    assert part["family"] == "coil"
    params = part["parameters"]
    assert params["inductance"]["value"] == f.value("coil.inductance")
    assert params["inductance"]["source"].startswith("fitted to greenhouse_valve_switch_off.csv, 2026-12-02")
    for name, p in params.items():
        assert p["unit"] and p["source"], name
    with pytest.raises(ValueError, match="letters, digits"):
        f.coil_record("bad name")
    with pytest.raises(KeyError, match="was not fitted"):
        f.value("coil.resistance")


def test_overlay_plot(demo_fit, tmp_path):
    _, _, f = demo_fit
    fig = coilkick.plot.overlay(f)
    top, bottom = fig.axes
    assert "coil current" in top.get_ylabel() and "residual" in bottom.get_ylabel()
    assert len(top.lines) == 2
    fig.savefig(tmp_path / "overlay.svg")
    assert (tmp_path / "overlay.svg").stat().st_size > 1000


def test_model_trace_reproduces_the_edge_at_zero(valve):
    t = np.linspace(-1e-3, 5e-3, 601)
    tr = coilkick.model_trace(valve, "switch-off", t)
    assert list(tr.columns) == ["time_after_edge_s", "current_A", "voltage_V"]
    # The trace's own switch-voltage edge is its time zero: half way to the peak between the samples around 0.
    v = tr.voltage_V.to_numpy()
    half = v[0] + 0.5 * (v.max() - v[0])
    k = np.argmax(v >= half)
    assert t[k - 1] <= 0.0 <= t[k]


def test_bad_input(valve):
    capture = coilkick.read_capture(CAPTURE, shunt_ohm=0.5)
    with pytest.raises(TypeError, match="DataFrame"):
        coilkick.fit(valve, capture.to_dict())
    with pytest.raises(ValueError, match="no column 'I' for the current"):
        coilkick.fit(valve, capture, columns={"current": "I"})
    with pytest.raises(ValueError, match="unknown role 'speed'"):
        coilkick.fit(valve, capture, columns={"speed": "x"})
    with pytest.raises(ValueError, match="noise_A"):
        coilkick.fit(valve, capture, noise_A=-1.0)
    with pytest.raises(ValueError, match="did you mean 'coil.inductance'"):
        coilkick.fit(valve, capture, parameters=["coil.inductanse"])
    with pytest.raises(ValueError, match="greenhouse_valve_switch_off.csv"):
        coilkick.read_capture(CAPTURE, channels={"current": "9"})
    with pytest.raises(ValueError, match="switch-off"):
        coilkick.model_trace(valve, "sideways", [0.0])


def test_a_capture_with_a_drive_column_is_timed_from_the_drive_edge(valve):
    # The valve's own switch-off traced from its drive edge (half way across the 20 ns fall), with
    # 1 mA of noise; the logic signal as the drive column, the switch voltage left out.
    t = np.arange(-0.5e-3, 6e-3, 4e-6)
    tr = coilkick.model_trace(valve, "switch-off", t, time_zero="drive")
    rng = np.random.default_rng(3)
    capture = pd.DataFrame({"time_s": t + 1e-3, "current_A": tr.current_A + rng.normal(0, 1e-3, t.size),
                            "drive_V": np.where(t < 0, 5.0, 0.0)})
    f = coilkick.fit(valve, capture, parameters=["coil.inductance"], noise_A=1e-3)
    assert f.time_zero == "drive" and f.edge == "switch-off"
    # The truth is the scenario's own inductance (the demo coil's 0.35 H).
    assert abs(f.value("coil.inductance") - 0.35) < 3 * f.parameters.standard_error.iloc[0]
    assert "drive" in coilkick.plot.overlay(f).axes[1].get_xlabel()
