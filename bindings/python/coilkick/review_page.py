"""The design-review page: one self-contained HTML file per scenario (no network, no scripts, no
external fonts; charts as inline SVG) that prints cleanly to PDF. Built with a template engine
(jinja2) from the normal runs: the driver as built, the on-state, every clamp side by side, the
switch-off waveforms, the release time against the spike voltage over the E24 Zeners, the
tolerance summary (when the file declares spreads), the rating checks, the sources of every value
used, and the caution.

    coilkick.report(scenario, "review.html", samples=200)
    coilkick report FILE --output review.html         (the command runs this module)
"""
import argparse
import datetime
import io
import math
import os
import sys
import xml.etree.ElementTree as ET

import numpy as np

from . import _core
from . import api
from . import plot

STANDARDS = [
    ("IEC 60028", "resistivity of annealed copper: the winding's temperature coefficient 0.00393 /K"),
    ("IEC 60063", "preferred number series (E24) of the Zener voltages swept"),
    ("IEC 61810-1", "relay terms: operate and release current, voltage and time"),
    ("common practice", "peak switch voltage kept below 80 % of its rating; forced gain at most half the minimum gain"),
]


def _svg(fig):
    plt = plot._plt()
    buf = io.StringIO()
    fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None})
    plt.close(fig)
    text = buf.getvalue()
    return text[text.index("<svg"):]


def _si(value, unit):
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    if not unit:
        return "%.4g" % value  # a ratio or a gain: no prefix
    if value == 0:
        return "0 " + unit
    prefixes = [(1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"), (1e-12, "p"), (1e-15, "f")]
    for factor, p in prefixes:
        if abs(value) >= factor:
            return "%.4g %s%s" % (value / factor, p, unit)
    return "%.4g %s" % (value, unit)


def _unit(metric):
    for suffix, unit in (("_m_per_s", "m/s"), ("_Hz", "Hz"), ("_V", "V"), ("_A", "A"), ("_J", "J"), ("_W", "W"), ("_s", "s"), ("_m", "m")):
        if metric.endswith(suffix):
            return unit
    return ""


def _drawing(scenario):
    """The driver as built, in a plain style of our own: rail at the top, ground at the bottom,
    coil and switch in series between them, the clamp drawn across what it clamps."""
    high = scenario.topology.startswith("high_side")
    kind = scenario.clamp_kind
    svg = ET.Element("svg", xmlns="http://www.w3.org/2000/svg", width="620", height="360", viewBox="0 0 620 360")
    svg.set("role", "img")
    ET.SubElement(svg, "title").text = "driver as built: %s, clamp %s" % (scenario.topology, kind)

    def line(x1, y1, x2, y2):
        ET.SubElement(svg, "line", x1=str(x1), y1=str(y1), x2=str(x2), y2=str(y2), stroke="#333", **{"stroke-width": "2"})

    def box(x, y, w, h, label, fill):
        ET.SubElement(svg, "rect", x=str(x), y=str(y), width=str(w), height=str(h), rx="6", fill=fill, stroke="#333")
        ET.SubElement(svg, "text", x=str(x + w / 2), y=str(y + h / 2 + 5), **{"text-anchor": "middle", "font-size": "13"}).text = label

    def text(x, y, s, anchor="start"):
        ET.SubElement(svg, "text", x=str(x), y=str(y), **{"font-size": "12", "text-anchor": anchor}).text = s

    line(60, 30, 460, 30)
    text(470, 34, "supply %s" % _si(scenario.supply_voltage_V, "V"))
    line(60, 330, 460, 330)
    text(470, 334, "ground")
    coil_box = (200, 60 if not high else 210, 120, 60)
    switch_box = (200, 210 if not high else 60, 120, 60)
    line(260, 30, 260, 330)
    box(*coil_box, "coil", "#e8f1f4")
    box(*switch_box, "switch (%s)" % scenario.switch_part.split("_")[0], "#f4ece4")
    text(330, 180, "switch node")
    if kind != "none":
        across_coil = kind in ("diode", "diode_zener", "diode_resistor", "rc_across_coil", "common_pin")
        target = coil_box if across_coil else switch_box
        x = 380
        top, bottom = target[1] - 10, target[1] + target[3] + 10
        line(260, top, x, top)
        line(260, bottom, x, bottom)
        box(x - 50, top + 10, 100, bottom - top - 20, kind.replace("_", " "), "#eef4e6")
    text(20, 355, scenario.clamp_parts)
    return ET.tostring(svg, encoding="unicode")


def _sources(part_names):
    rows = []
    for name in part_names:
        info = api.part_info(name)
        for group in ("parameters", "ratings"):
            for key, (value, unit, source) in sorted(info.get(group, {}).items()):
                rows.append({"part": name, "group": group[:-1], "key": key, "value": "%.6g %s" % (value, unit), "source": source})
    return rows


def _progress(stream, label, done, total):
    if stream is not None:
        stream.write("\r%s %d/%d" % (label, done, total))
        if done == total:
            stream.write("\n")
        stream.flush()


def build(scenario, samples=200, seed=1, progress=None):
    """The page's data (for the template): every section's tables and charts."""
    api._require_scenario(scenario)
    run = api.run(scenario)
    rows = api.compare(scenario)
    data = {"name": scenario.name, "file": scenario.source_name, "topology": scenario.topology,
            "clamp_kind": scenario.clamp_kind, "clamp_parts": scenario.clamp_parts,
            "version": _core.__version__, "date": datetime.date.today().isoformat(), "caution": _caution()}
    built = scenario.elements()
    data["drawing"] = _drawing(scenario)
    data["elements"] = built["elements"]
    on_names = ["coil_current_at_switch_off_A", "drive_current_A", "forced_beta", "switch_saturation_voltage_V",
                "coil_voltage_on_V", "logic_pin_current_A"]
    data["on_state"] = [{"name": n, "value": run.metrics[n], "text": _si(run.metrics[n], _unit(n))} for n in on_names]
    # A PWM hold or a repetition: its metrics, and its ripple and the release from it per clamp.
    data["hold"] = None
    if run.hold is not None:
        hold_names = [n for n in run.metrics if n.startswith("hold_") and math.isfinite(run.metrics[n])]
        data["hold"] = {"rows": [{"name": n, "value": run.metrics[n], "text": _si(run.metrics[n], _unit(n))} for n in hold_names],
                        "svg": _svg(plot.hold(rows, title="the hold per clamp"))}
    # A board of several channels: one row per channel from the same run.
    columns = [("coil_current_at_switch_off_A", "coil current"), ("switch_voltage_peak_V", "peak switch voltage"),
               ("coil_end_peak_V", "peak across the coil"), ("clamp_energy_J", "clamp energy"), ("release_time_s", "release time"),
               ("current_decay_time_10pct_s", "current down to 10 %")]
    data["channel_columns"] = columns
    data["channels"] = [{"name": c.name, "overall": c.overall,
                         "cells": [(n, c.metrics[n], _si(c.metrics[n], _unit(n))) for n, _ in columns]} for c in run.channels]
    data["common_clamp_energy"] = run.metrics["common_clamp_energy_J"]
    data["common_clamp_energy_text"] = _si(run.metrics["common_clamp_energy_J"], "J")
    compare_rows = []
    for r in rows:
        m = r.result.metrics if r.result else {}
        compare_rows.append({
            "kind": r.kind, "parts": r.parts, "error": r.error, "overall": r.result.overall if r.result else "error",
            "cells": [(n, m.get(n, float("nan")), _si(m.get(n, float("nan")), _unit(n))) for n in
                      ("switch_voltage_peak_V", "switch_voltage_margin", "coil_end_peak_V", "release_time_s",
                       "contact_open_time_s", "clamp_energy_J", "clamp_current_peak_A")],
            "failed": [c["name"] for c in r.result.checks if c["status"] == "fail"] if r.result else [],
        })
    data["comparison"] = compare_rows
    data["waveforms_svg"] = _svg(plot.switch_off(rows, title="switch-off per clamp"))
    # A coil at the end of a cable: both ends over the first microseconds.
    data["cable_svg"] = None
    if any(e["kind"] == "transmission line" for e in built["elements"]):
        data["cable_svg"] = _svg(plot.cable_ends(rows, title="the board and the coil at the cable's far end"))
    # Release time against spike voltage over the catalogue's E24 Zeners (IEC 60063).
    data["curve_svg"] = None
    if "diode_zener" in scenario.applicable_clamp_kinds:
        zener = scenario.with_clamp_kind("diode_zener")
        volts = sorted({api.part_info(n)["parameters"]["breakdown_voltage"][0] for n in api.part_names("zener")})
        df = api.sweep(zener, {"clamp.zener.overrides.breakdown_voltage": volts})
        df["zener_V"] = df["clamp.zener.overrides.breakdown_voltage"]
        data["curve_svg"] = _svg(plot.release_vs_peak(df, rating_V=run.metrics["switch_voltage_rating_V"], derating=0.8,
                                                       label_column="zener_V", title="release time against spike voltage, E24 Zeners"))
    # Tolerance (only when the file declares spreads).
    data["tolerance"] = None
    spreads = _core.tolerance_spreads(scenario)
    if spreads and samples > 0:
        n = _core.tolerance_point_count(scenario, samples)
        results = []
        chunk = max(1, n // 20)
        for start in range(0, n, chunk):
            idx = list(range(start, min(n, start + chunk)))
            results += _core.tolerance_points(scenario, samples, seed, idx, 0)
            _progress(progress, "tolerance runs", min(n, start + chunk), n)
        t = api.ToleranceResult(spreads, results)
        worst = []
        for metric in ("switch_voltage_peak_V", "release_time_s", "clamp_energy_J"):
            if metric in t.runs and t.runs[metric].notna().any():
                w = t.worst(metric)
                worst.append({"metric": metric, "label": w["label"], "value": _si(float(w[metric]), _unit(metric))})
        data["tolerance"] = {"runs": len(t.runs), "counts": t.counts, "worst": worst,
                             "svg": _svg(plot.histograms(t, title="tolerance: %d runs" % len(t.runs)))}
    data["checks"] = [dict(c, value_text=_si(c["value"], c["unit"] if c["unit"] != "1" else ""),
                           limit_text=_si(c["limit"], c["unit"] if c["unit"] != "1" else "")) for c in run.checks]
    data["overall"] = run.overall
    data["sources"] = _sources(built["parts"])
    data["standards"] = STANDARDS
    return data


def _caution():
    from . import CAUTION
    return CAUTION


def render(data):
    import jinja2
    env = jinja2.Environment(loader=jinja2.FileSystemLoader(os.path.dirname(os.path.abspath(__file__))),
                             autoescape=jinja2.select_autoescape(["html"]))
    env.filters["num"] = lambda v: "%.17g" % v if isinstance(v, float) and math.isfinite(v) else ("" if v is None else str(v))
    return env.get_template("review_page.html").render(**data)


def report(scenario, path, samples=200, seed=1, progress=None):
    """Writes the design-review page of `scenario` to `path` (HTML); returns the path. `samples`:
    Monte Carlo runs of the tolerance section (0: none); `progress`: a stream for progress lines."""
    path = os.fspath(path)
    directory = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(directory) or not os.access(directory, os.W_OK):
        raise ValueError("report: cannot write '%s' (no writable directory %s)" % (path, directory))
    page = render(build(scenario, samples=samples, seed=seed, progress=progress))
    tmp = path + ".part"
    with open(tmp, "w", encoding="utf-8") as f:
        f.write(page)
    os.replace(tmp, path)  # never a half-written page under the final name
    return path


def main(argv=None):
    parser = argparse.ArgumentParser(prog="coilkick report", description="design-review page of a scenario (HTML)")
    parser.add_argument("file")
    parser.add_argument("--output", default=None, help="HTML file to write (default: the scenario's name + .html)")
    parser.add_argument("--samples", type=int, default=200, help="Monte Carlo runs of the tolerance section (default 200)")
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--models", default="", help="models directory")
    parser.add_argument("--quiet", action="store_true")
    args = parser.parse_args(argv)
    out = args.output or os.path.splitext(os.path.basename(args.file))[0] + ".html"
    try:
        s = api.load_scenario(args.file, models_dir=args.models)
        report(s, out, samples=args.samples, seed=args.seed, progress=None if args.quiet else sys.stderr)
    except KeyboardInterrupt:
        sys.stderr.write("\ncoilkick: interrupted (Ctrl-C); no report was written\n")
        return 130
    except _core.SimulationError as e:
        sys.stderr.write("coilkick: simulation failed: %s\n" % e)
        return 3
    except (ValueError, TypeError) as e:
        sys.stderr.write("coilkick: %s\n" % e)
        return 2
    print("coilkick report: %s\n\n%s" % (out, _caution()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
