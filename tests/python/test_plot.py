"""coilkick.plot draws every chart with labelled axes (Agg backend, no display)."""
import matplotlib

matplotlib.use("Agg")

import coilkick
import coilkick.plot


def test_every_plot_draws_with_unit_labels(relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    rows = coilkick.compare(s, ["diode", "diode_zener"])
    f1 = coilkick.plot.switch_off(rows)
    assert f1.axes[0].get_ylabel() == "switch voltage (V)"
    assert "ms" in f1.axes[1].get_xlabel()
    f2 = coilkick.plot.comparison(rows)
    assert f2.axes[0].get_xlabel() == "time after switch-off (ms)"
    curve = coilkick.sweep(s, {"clamp.zener.overrides.breakdown_voltage": [5.1, 10.0, 15.0]})
    f3 = coilkick.plot.release_vs_peak(curve, rating_V=40.0)
    assert f3.axes[0].get_xlabel() == "peak switch voltage (V)"
    assert len(f3.axes[0].lines) == 3  # the curve, the rating and the derated limit
    t = coilkick.tolerance(s, samples=8, seed=1)
    f4 = coilkick.plot.histograms(t)
    assert len(f4.axes) == 3


def test_armature_plots_show_the_gap_and_the_contact_opening(valve):
    rows = coilkick.compare(valve, ["diode", "diode_zener"])
    f = coilkick.plot.switch_off(rows)
    assert len(f.axes) == 3
    assert f.axes[2].get_ylabel() == "armature gap (mm)"
    assert "contact opens" in f.axes[2].get_xlabel()
    f2 = coilkick.plot.comparison(rows)
    assert [t.get_text() for t in f2.axes[0].get_legend().get_texts()] == ["current below release", "contact opens"]


def test_hold_plot_shows_the_ripple_and_the_release_from_the_hold(relay_dict):
    held = dict(relay_dict)
    held["hold"] = {"pull_in_time": "5 ms", "pwm_frequency": "20 kHz", "pwm_duty": "60 %"}
    s = coilkick.scenario_from_dict(held)
    rows = coilkick.compare(s, ["diode", "diode_zener"])
    h = rows[0].result.hold
    assert h["duty"] == 0.6 and h["period_s"] == 50e-6
    # One steady period from its start at the falling edge, as its waveform says.
    assert h["period"]["time_s"][0] == 0.0
    assert abs(h["period"]["time_s"][-1] - 50e-6) < 1e-12
    assert min(h["period"]["coil_current_A"]) > 0.0
    f = coilkick.plot.hold(rows)
    assert "µs" in f.axes[0].get_xlabel() and f.axes[1].get_ylabel() == "coil current (mA)"
    # Without a hold there is nothing to draw: an error, not an empty chart.
    plain = coilkick.compare(coilkick.scenario_from_dict(relay_dict), ["diode"])
    assert plain[0].result.hold is None
    try:
        coilkick.plot.hold(plain)
        raise AssertionError("expected ValueError")
    except ValueError as e:
        assert "[hold]" in str(e)


def test_channels_plot_draws_every_channel_and_marks_its_release(relay_dict):
    board = dict(relay_dict)
    board["channel"] = [{"name": "fast", "coil": {"inductance": "300 mH"}}, {"name": "late", "drive": {"switch_off_at": "300 us"}}]
    r = coilkick.run(coilkick.scenario_from_dict(board))
    f = coilkick.plot.channels(r)
    assert f.axes[0].get_ylabel() == "switch voltage (V)" and f.axes[1].get_ylabel() == "coil current (mA)"
    # Per channel a current line and its release dot; the late channel's dot 0.2 ms after its own release time.
    assert len(f.axes[1].lines) == 6
    late_dot = f.axes[1].lines[5].get_xdata()[0]
    assert abs(late_dot - 1e3 * (0.2e-3 + r.channels[2].metrics.release_time_s)) < 1e-9
    # One channel: nothing to draw per channel, an error rather than an empty chart.
    try:
        coilkick.plot.channels(coilkick.run(coilkick.scenario_from_dict(relay_dict)))
        assert False, "expected an error"
    except ValueError as e:
        assert "one channel" in str(e)


def test_cable_ends_plot_draws_both_ends_of_the_cable(relay_dict):
    wired = dict(relay_dict)
    wired["cable"] = {"length": "60 m"}
    rows = coilkick.compare(coilkick.scenario_from_dict(wired), ["diode", "diode_zener"])
    f = coilkick.plot.cable_ends(rows)
    assert f.axes[0].get_ylabel() == "switch voltage (V)"
    assert "far end" in f.axes[1].get_ylabel() and "µs" in f.axes[1].get_xlabel()
    # Per result a curve and its peak's dot in each panel (and the rating in the top one).
    assert len(f.axes[1].lines) == 4
    # The dot sits on the largest magnitude of the coil's own voltage over the window shown: with
    # the Zener the front's overshoot at the coil (Γ = 1 there), which is the run's coil-end peak
    # (that metric is refined on the dense output, the dot is a recorded point: 1e-3).
    kinds = [row.kind for row in rows]
    z = kinds.index("diode_zener")
    r = rows[z].result
    coil = r.node_voltage_V("coil_in") - r.node_voltage_V("coil_out")
    shown = (r.time_s - r.switch_off_at_s >= 0) & (r.time_s - r.switch_off_at_s <= 20e-6)
    dot = f.axes[1].lines[2 * z + 1].get_ydata()[0]
    assert abs(abs(dot) - abs(coil[shown]).max()) < 1e-12
    assert abs(abs(dot) / r.metrics["coil_end_peak_V"] - 1.0) < 1e-3
    # A run without a cable: an error naming what is missing, not an empty chart.
    try:
        coilkick.plot.cable_ends(coilkick.run(coilkick.scenario_from_dict(relay_dict)))
        assert False, "expected an error"
    except ValueError as e:
        assert "[cable]" in str(e)
