"""The Python binding layer: results equal the CLI's, errors carry the same messages, arrays are
views (no copy), long calls release the GIL, analyses return DataFrames."""
import json
import subprocess
import threading
import time
import copy
import pickle
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor

import numpy as np
import pandas as pd
import pytest

import coilkick


def test_python_results_equal_the_cli(valve, program):
    r = coilkick.run(valve)
    out = subprocess.run([program, "run", valve.source_name, "--json"], capture_output=True, text=True, check=True)
    cli = json.loads(out.stdout)["metrics"]
    assert set(cli) == set(r.metrics)
    for k, v in r.metrics.items():
        if np.isnan(v):
            assert cli[k] is None, k
        else:
            assert cli[k] == v, k  # the same computation: bit-identical through JSON's round-trip digits


def test_attribute_access_and_to_dict(valve):
    r = coilkick.run(valve)
    assert r.metrics.release_time_s == r.metrics["release_time_s"]
    d = r.to_dict()
    assert d["overall"] in ("pass", "warn", "fail")
    assert {c["name"] for c in d["checks"]} >= {"switch_voltage", "accuracy"}
    assert r.checks[0].status in ("pass", "warn", "fail")


def test_waveforms_are_views_without_copy(valve):
    r = coilkick.run(valve)
    a, b = r.coil_current_A, r.coil_current_A
    assert not a.flags["OWNDATA"]
    assert np.shares_memory(a, b)  # two accesses see the same C++ buffer
    assert a.shape == r.time_s.shape
    assert r.time_s[0] == 0.0 and np.all(np.diff(r.time_s) > 0)
    assert len(r.node_voltage_V("switch")) == len(r.time_s)


def test_dict_scenario_bad_key_gives_the_file_message(relay_dict, tmp_path):
    relay_dict["coil"]["inductnce"] = relay_dict["coil"].pop("inductance")
    with pytest.raises(coilkick.ScenarioError) as from_dict:
        coilkick.scenario_from_dict(relay_dict)
    text = coilkick.toml_text.to_toml(relay_dict)
    path = tmp_path / "bad.toml"
    path.write_text(text)
    with pytest.raises(coilkick.ScenarioError) as from_file:
        coilkick.load_scenario(path)
    tail = "key 'coil.inductnce': unknown key (did you mean 'coil.inductance'?)"
    assert str(from_dict.value).endswith(tail)
    assert str(from_file.value).endswith(tail)
    assert str(from_dict.value).replace("<dict>", str(path)) == str(from_file.value)
    assert isinstance(from_dict.value, ValueError)


def test_exceptions_carry_the_messages(relay_dict):
    with pytest.raises(coilkick.ScenarioError, match="cannot open"):
        coilkick.load_scenario("/nonexistent/x.toml")
    relay_dict["coil"]["inductance"] = "30 pF"
    with pytest.raises(coilkick.ScenarioError, match="is a capacitance, but an inductance"):
        coilkick.scenario_from_dict(relay_dict)
    relay_dict["coil"]["inductance"] = "600 mH"
    relay_dict["analysis"]["maximum_wall_time"] = "1 us"
    s = coilkick.scenario_from_dict(relay_dict)
    with pytest.raises(coilkick.SimulationError, match="wall-time budget"):
        coilkick.run(s)
    with pytest.raises(ValueError, match="no part named"):
        coilkick.part_info("no_such_part")


def test_sweep_dataframe_and_executor_give_the_same_numbers(relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    vary = {"clamp.zener.overrides.breakdown_voltage": coilkick.span(5.0, 25.0, 5), "supply.voltage": [11.0, 13.0]}
    local = coilkick.sweep(s, vary, threads=2)
    assert isinstance(local, pd.DataFrame) and len(local) == 10
    assert list(local.columns[:2]) == list(vary)
    with ThreadPoolExecutor(max_workers=2) as ex:
        remote = coilkick.sweep(s, vary, executor=ex, chunk_size=3)
    pd.testing.assert_frame_equal(local, remote)
    # A higher Zener voltage: faster release, higher peak (first axis slowest, second fastest).
    at11 = local[local["supply.voltage"] == 11.0]
    assert at11["release_time_s"].is_monotonic_decreasing
    assert at11["switch_voltage_peak_V"].is_monotonic_increasing


def test_a_clamp_kind_set_after_parsing_survives_copies_pickling_and_workers(relay_dict):
    # A scenario with another clamp kind, then a value set: the kind must not fall back to the
    # file's, neither in the copy nor in a worker process (which rebuilds it from its pickle).
    s = coilkick.scenario_from_dict(relay_dict).with_clamp_kind("diode").with_value("supply.voltage", 13.0)
    d = copy.deepcopy(relay_dict)
    d["clamp"]["kind"] = "diode"
    d["supply"]["voltage"] = "13 V"
    written = coilkick.scenario_from_dict(d)
    assert s.clamp_kind == "diode"
    pd.testing.assert_series_equal(pd.Series(coilkick.run(s).metrics), pd.Series(coilkick.run(written).metrics))  # NaN == NaN here
    # What it is, at a glance (a notebook's echo): name, clamp and the values set.
    assert repr(s) == "<coilkick.Scenario 'python test relay' from <dict>: low_side_npn, clamp diode, supply.voltage = 13.0>"
    back = pickle.loads(pickle.dumps(s))
    assert back.clamp_kind == "diode" and back.assignments == s.assignments
    vary = {"coil.inductance": [0.5, 0.6]}
    with ProcessPoolExecutor(max_workers=2) as ex:
        remote = coilkick.sweep(s, vary, executor=ex, chunk_size=1)
    pd.testing.assert_frame_equal(remote, coilkick.sweep(written, vary, threads=1))
    # A plain diode releases far slower than the file's diode + Zener (common practice).
    zener = coilkick.sweep(s.with_clamp_kind("diode_zener"), vary, threads=1)
    assert (remote["release_time_s"] > 2 * zener["release_time_s"]).all()


def test_tolerance_local_threads_and_executor_agree(relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    a = coilkick.tolerance(s, samples=10, seed=5, threads=1)
    b = coilkick.tolerance(s, samples=10, seed=5, threads=2)
    with ThreadPoolExecutor(max_workers=2) as ex:
        c = coilkick.tolerance(s, samples=10, seed=5, executor=ex, chunk_size=4)
    pd.testing.assert_frame_equal(a.runs, b.runs)
    pd.testing.assert_frame_equal(a.runs, c.runs)
    assert len(a.runs) == 8 + 10  # 3 spreads (supply, coil resistance, Zener 5 %) -> 8 corners
    assert a.worst("switch_voltage_peak_V")["label"].startswith("corner")
    assert "release_time_s" in a.summary.index


def test_suggest_ranks_meeting_candidates_first(relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    df = coilkick.suggest(s, 0.8e-3, 32.0, threads=2)
    meets = df[df["meets_limits"]]
    assert len(meets) > 0
    assert (meets["switch_voltage_peak_V"] <= 32.0).all()
    assert meets["release_time_s"].is_monotonic_increasing


def test_long_work_releases_the_gil(relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    # Size the sweep from a short one so that it lasts about half a second on any machine: the
    # check below compares the ticker's gaps with the sweep's own length, not with a fixed time.
    t0 = time.perf_counter()
    coilkick.sweep(s, {"coil.inductance": coilkick.span(0.2, 1.0, 10)}, threads=1)
    per_point_s = (time.perf_counter() - t0) / 10
    points = int(min(5000, max(20, 0.5 / per_point_s)))

    ticks = []
    stop = threading.Event()

    def ticker():
        while not stop.is_set():
            ticks.append(time.perf_counter())
            time.sleep(0.002)

    t = threading.Thread(target=ticker)
    t.start()
    start = time.perf_counter()
    coilkick.sweep(s, {"coil.inductance": coilkick.span(0.2, 1.0, points)}, threads=1)
    end = time.perf_counter()
    stop.set()
    t.join()
    during = [start] + [x for x in ticks if start < x < end] + [end]
    largest_gap = max(b - a for a, b in zip(during, during[1:]))
    # With the GIL held the ticker is frozen for the whole call: one gap as long as the sweep.
    # Released, it ticks every ~2 ms; half the sweep's length leaves room for a loaded machine.
    assert largest_gap < 0.5 * (end - start), (largest_gap, end - start, points)
    assert len(during) > 10


def test_faults_grouped_by_symptom(relay_dict):
    relay_dict["clamp"]["kind"] = "diode"
    rep = coilkick.faults(coilkick.scenario_from_dict(relay_dict))
    assert "relay never releases" in rep.by_symptom
    assert "switch collector-emitter shorted" in rep.by_symptom["relay never releases"]
    df = rep.readings()
    assert set(df.columns) >= {"node", "healthy_on_V", "faulty_on_V", "healthy_off_V", "faulty_off_V"}
    assert rep.healthy.coil_current_on_A > 0.02


def test_armature_model_from_a_dict_gives_contact_metrics_and_the_gap_waveform(relay_dict):
    # The relay_dict coil with data-sheet values of a relay (invented test values).
    relay_dict["coil"].pop("release_current")
    relay_dict["coil"].update({"release_voltage": "1.8 V", "operate_voltage": "8.4 V"})
    relay_dict["relay"] = {"armature_model": True, "operate_time": "10 ms", "release_time": "2.5 ms",
                           "contact_gap": "0.4 mm", "over_travel": "0.1 mm"}
    r = coilkick.run(coilkick.scenario_from_dict(relay_dict))
    gap = r.armature_gap_m
    assert gap.shape == r.time_s.shape and not gap.flags["OWNDATA"]
    # Starts on the closed stop (within its 0.1 µm penetration of the 50 µm residual gap), ends past the contact.
    assert abs(gap[0] - 50e-6) < 0.2e-6
    assert gap[-1] > 50e-6 + 0.1e-3
    m = r.metrics
    assert m.contact_open_time_s > m.release_time_s > 0
    assert m.armature_speed_at_contact_open_m_per_s > 0
    assert 0.9 * 10e-3 < m.operate_time_s < 1.2 * 10e-3  # at 12 V nominal the calibration met 10 ms
    assert {c.name for c in r.checks} >= {"relay_calibration"}


def test_armature_model_without_its_times_names_the_missing_key(relay_dict):
    relay_dict["relay"] = {"armature_model": True}
    with pytest.raises(coilkick.ScenarioError, match="relay.armature_model.*needs coil.operate_voltage"):
        coilkick.scenario_from_dict(relay_dict)


def test_extra_parts_and_supply_keys_from_a_dict(relay_dict):
    # A diode + resistor clamp built from extra parts, on a rail with source resistance and a bulk
    # capacitor; swept over the extra resistor: a larger resistor releases faster and spikes higher
    # (the diode + resistor closed form, docs/derivations.md).
    d = dict(relay_dict)
    d["clamp"] = {"kind": "none"}
    d["supply"] = {"voltage": "12 V", "source_resistance": "0.5 ohm", "bulk_capacitance": "100 uF"}
    d["extra_part"] = [
        {"name": "own_diode", "element": "part", "part": "rectifier_1a", "between": ["switch", "mid"]},
        {"name": "own_resistor", "element": "resistor", "value": "200 ohm", "between": ["mid", "supply"]},
    ]
    s = coilkick.scenario_from_dict(d)
    r = coilkick.run(s)
    assert r.metrics.extra_parts_energy_J > 0
    assert r.metrics.supply_rail_peak_rise_V > 0
    df = coilkick.sweep(s, {"extra_part.own_resistor.value": [100.0, 200.0, 400.0]}, threads=2)
    assert (df["error"] == "").all()
    assert df["release_time_s"].is_monotonic_decreasing
    assert df["switch_voltage_peak_V"].is_monotonic_increasing
    with pytest.raises(coilkick.ScenarioError, match="did you mean 'extra_part.own_resistor.value'"):
        coilkick.sweep(s, {"extra_part.own_resistor.valu": [1.0]})


def test_board_of_channels_from_a_dict(relay_dict):
    # Two more coils on the relay's board with their own clamps (copies of the first's) on an ideal
    # rail: nothing joins them, so the "fast" channel (half the inductance) releases as that driver
    # alone does — to 1e-5 (both runs at the engine's default tolerance 1e-6, on different steps).
    d = dict(relay_dict)
    d["channel"] = [{"name": "fast", "coil": {"inductance": "300 mH"}},
                    {"name": "late", "drive": {"switch_off_at": "200 us"}}]
    r = coilkick.run(coilkick.scenario_from_dict(d))
    assert [c.name for c in r.channels] == ["first", "fast", "late"]
    assert r.channels[1].metrics.release_time_s == r.metrics["fast.release_time_s"]
    assert len(r.channels[2].coil_current_A) == len(r.time_s)
    alone = dict(relay_dict)
    alone["coil"] = dict(relay_dict["coil"], inductance="300 mH")
    ra = coilkick.run(coilkick.scenario_from_dict(alone))
    assert r.channels[1].metrics.release_time_s == pytest.approx(ra.metrics.release_time_s, rel=1e-5)
    assert any(c.name.startswith("late: ") for c in r.checks)
    df = coilkick.sweep(coilkick.scenario_from_dict(d), {"channel.fast.coil.inductance": [0.2, 0.3, 0.4]})
    assert (df["error"] == "").all()
    assert df["fast.release_time_s"].is_monotonic_increasing  # more inductance, slower release
    # The first channel is untouched (to 1e-5: the runs step differently with the other coil).
    assert df["release_time_s"].max() == pytest.approx(df["release_time_s"].min(), rel=1e-5)
    with pytest.raises(coilkick.ScenarioError, match="named 'fast'"):
        d["channel"][0]["coil"] = {"inductance": "30 pF"}
        coilkick.scenario_from_dict(d)
