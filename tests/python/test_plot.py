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
