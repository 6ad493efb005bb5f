"""The public Python API of coilkick (re-exported by the package)."""
import itertools
import math
import numbers
import os
from dataclasses import dataclass
from typing import Any, Dict, List, Optional

import numpy as np
import pandas as pd

from . import _core
from .toml_text import to_toml


class AttrDict(dict):
    """A dict whose keys are also attributes: metrics.release_time_s."""

    def __getattr__(self, name):
        try:
            return self[name]
        except KeyError:
            raise AttributeError(name) from None

    def to_dict(self):
        return dict(self)


def part_names(family: str = "", models_dir: str = "") -> List[str]:
    """Catalogue part names, optionally of one family (diode, zener, tvs, npn, pnp, nmos, pmos, darlington_npn, coil)."""
    return _core.part_names(models_dir, family)


def part_info(name: str, models_dir: str = "") -> Dict[str, Any]:
    """One catalogue part: parameters and ratings as {key: (value, SI unit, source)}."""
    return _core.part_info(name, models_dir)


def load_scenario(path, models_dir: str = "") -> "_core.Scenario":
    """Read a scenario TOML file. Errors: ScenarioError "file:line:column: key 'x': ..."."""
    path = os.fspath(path)
    try:
        with open(path, "rb") as f:
            text = f.read().decode("utf-8")
    except OSError:
        raise _core.ScenarioError("%s:1:1: cannot open the scenario file for reading" % path) from None
    return _core.Scenario(text, path, models_dir)


def scenario_from_dict(d: Dict[str, Any], models_dir: str = "", name: str = "<dict>") -> "_core.Scenario":
    """A scenario from a dict in the file's schema, e.g. {"supply": {"voltage": "24 V"}, ...}.
    A bad key gives the same message as in a file (the location names the generated text)."""
    return _core.Scenario(to_toml(d), name, models_dir)


class RunResult:
    """One switch-off. metrics: AttrDict (SI unit in each name); checks: list of AttrDict;
    time_s, switch_voltage_V, coil_current_A, clamp_current_A, armature_gap_m (armature model only,
    else empty): numpy arrays sharing the result's memory; hold: the PWM hold's waveforms (or None);
    channels: on a board of several channels (scenario [[channel]]) one AttrDict per channel, the
    first (top-level) one first — name, metrics, checks, overall, switch_off_at_s, time_s, switch_voltage_V,
    coil_current_A — else empty. On a board, metrics are the first channel's with the board's and
    every further channel's behind its name ("pump.release_time_s"); checks are every channel's."""

    def __init__(self, core):
        self._core = core
        self.metrics = AttrDict(core.metrics)
        self.checks = [AttrDict(c) for c in core.checks]
        self.overall = core.overall
        self.channels = [AttrDict(c, metrics=AttrDict(c["metrics"]), checks=[AttrDict(x) for x in c["checks"]])
                         for c in core.channels]

    time_s = property(lambda self: self._core.time_s, doc="accepted time points (s)")
    switch_voltage_V = property(lambda self: self._core.switch_voltage_V, doc="voltage across the switch (V)")
    coil_current_A = property(lambda self: self._core.coil_current_A, doc="coil current (A)")
    clamp_current_A = property(lambda self: self._core.clamp_current_A, doc="current through the first clamp part (A)")
    armature_gap_m = property(lambda self: self._core.armature_gap_m,
                              doc="armature gap (m) with the armature model; empty array otherwise")
    switch_off_at_s = property(lambda self: self._core.switch_off_at_s, doc="start of the switch-off edge (s)")
    hold = property(lambda self: self._core.hold,
                    doc="with a PWM hold (scenario [hold]): dict of the pull-in and one steady period ('pull_in', "
                        "'period': each 'time_s' and 'coil_current_A'), 'period_s', 'duty' and how the steady state "
                        "was found; None without a hold")

    def node_voltage_V(self, node: str) -> np.ndarray:
        """Voltage of a node (V) at time_s (nodes: supply, logic, base, switch ...)."""
        return self._core.node_voltage_V(node)

    def to_dict(self) -> Dict[str, Any]:
        return {"metrics": dict(self.metrics), "checks": [dict(c) for c in self.checks], "overall": self.overall}

    def __repr__(self):
        m = self.metrics
        return "RunResult(peak %.4g V, release %.4g s, %s)" % (m["switch_voltage_peak_V"], m["release_time_s"], self.overall)


# The same limits as the command line (coilkick sweep, coilkick tolerance).
MAX_SWEEP_POINTS = 1_000_000
MAX_SPAN_COUNT = 100_000
MAX_SAMPLES = 10_000_000


def _require_scenario(scenario, argument="scenario"):
    if not isinstance(scenario, _core.Scenario):
        raise TypeError("%s: expected a coilkick scenario (coilkick.load_scenario or coilkick.scenario_from_dict), got %s"
                        % (argument, type(scenario).__name__))


def _require_int(value, argument, low, high):
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise TypeError("%s: expected a whole number, got %r" % (argument, value))
    if not low <= value <= high:
        raise ValueError("%s: must be from %d to %d, got %d" % (argument, low, high, value))
    return int(value)


def _require_executor(executor):
    if executor is not None and not callable(getattr(executor, "submit", None)):
        raise TypeError("executor: expected an object with submit() (concurrent.futures executor, dask Client), got %s"
                        % type(executor).__name__)


def run(scenario) -> RunResult:
    """Simulate one switch-off of the scenario's driver (on-state DC point, then the switch-off edge)."""
    _require_scenario(scenario)
    return RunResult(_core.run(scenario))


@dataclass
class ComparisonRow:
    kind: str
    parts: str
    result: Optional[RunResult]
    error: str

    def to_dict(self):
        return {"kind": self.kind, "parts": self.parts, "error": self.error,
                "result": self.result.to_dict() if self.result else None}


def compare(scenario, kinds: Optional[List[str]] = None) -> List[ComparisonRow]:
    """Every applicable clamp kind (or the given ones) on the driver, fastest release first."""
    _require_scenario(scenario)
    kinds = list(scenario.applicable_clamp_kinds if kinds is None else kinds)
    return [ComparisonRow(k, p, RunResult(r) if r is not None else None, e) for k, p, r, e in _core.compare(scenario, kinds)]


@dataclass(frozen=True)
class Span:
    """An even range of a sweep axis: `count` values from `start` to `stop`, both included (SI base units)."""
    start: float
    stop: float
    count: int

    def values(self) -> List[float]:
        if self.count == 1:
            return [self.start]
        return [self.start + (self.stop - self.start) * k / (self.count - 1) for k in range(self.count)]


def span(start: float, stop: float, count: int) -> Span:
    """A sweep axis of `count` evenly spaced values from start to stop (both included), as the command's
    --vary KEY=START:STOP:COUNT. A list (or numpy array) of values is the other kind of axis."""
    for name, v in (("start", start), ("stop", stop)):
        if isinstance(v, bool) or not isinstance(v, numbers.Real) or not math.isfinite(v):
            raise ValueError("span: %s must be a finite number, got %r" % (name, v))
    count = _require_int(count, "span: count", 1, MAX_SPAN_COUNT)
    return Span(float(start), float(stop), count)


def _axis_length(key, spec):
    if isinstance(spec, Span):
        return spec.count
    if isinstance(spec, tuple):
        raise TypeError("sweep: key %r: a tuple is ambiguous (values or start, stop, count?): give "
                        "coilkick.span(start, stop, count) for an even range or a list of values" % key)
    if isinstance(spec, (str, bytes, dict, numbers.Number)) or not hasattr(spec, "__len__"):
        raise TypeError("sweep: key %r: expected coilkick.span(start, stop, count) or a list of values, got %s"
                        % (key, type(spec).__name__))
    if len(spec) == 0:
        raise ValueError("sweep: key %r: the list of values is empty" % key)
    return len(spec)


def _axis_values(key, spec):
    if isinstance(spec, Span):
        return spec.values()
    values = []
    for v in spec:
        if isinstance(v, bool) or not isinstance(v, numbers.Real) or not math.isfinite(v):
            raise ValueError("sweep: key %r: every value must be a finite number, got %r" % (key, v))
        values.append(float(v))
    return values


def _frame(rows, lead_columns):
    records = []
    for lead, r in zip(lead_columns, rows):
        rec = dict(lead)
        rec["overall"] = r["overall"]
        rec["error"] = r["error"]
        rec["failed_checks"] = ", ".join(r["failed_checks"])
        rec.update(r["metrics"])
        records.append(rec)
    return pd.DataFrame.from_records(records)


def _sweep_chunk(scenario, keys, values):
    """One chunk of sweep points in a worker (module level so that executors can pickle it; a Scenario
    pickles as the recipe it was built from: text, assignments and a clamp kind set after parsing)."""
    return _core.run_points(scenario, keys, values, 1)


def _chunks(n, chunk_size):
    if chunk_size is None:
        chunk_size = max(1, n // 32)
    return [list(range(i, min(n, i + chunk_size))) for i in range(0, n, chunk_size)]


def sweep(scenario, vary: Dict[str, Any], executor=None, threads: int = 0, chunk_size: Optional[int] = None) -> pd.DataFrame:
    """Grid sweep over numeric keys. vary: {key: (start, stop, count) or [values]} in the keys' units
    (numeric_keys(): SI base units, temperatures in degC); the grid is the product, first key slowest.
    Returns a DataFrame: the keys, overall, error, failed_checks, every metric.
    With `executor` (concurrent.futures style: submit() returning futures; a dask Client works) the grid is
    split into chunks run there; the numbers are the same as without. Limits as the command's: an unknown key is a
    ScenarioError (with the closest key), at most 100,000 values per span and 1,000,000 points in all."""
    _require_scenario(scenario)
    _require_executor(executor)
    _require_int(threads, "threads", 0, 1024)
    if chunk_size is not None:
        _require_int(chunk_size, "chunk_size", 1, MAX_SWEEP_POINTS)
    if not isinstance(vary, dict) or not vary:
        raise TypeError("sweep: vary must be a non-empty dict {key: coilkick.span(...) or [values]}")
    keys = list(vary.keys())
    total = 1
    for k in keys:
        if not isinstance(k, str):
            raise TypeError("sweep: keys must be strings, got %r" % (k,))
        _core.check_numeric_key(scenario, k)
        total *= _axis_length(k, vary[k])
        if total > MAX_SWEEP_POINTS:
            raise ValueError("sweep: more than %d grid points" % MAX_SWEEP_POINTS)
    axes = [_axis_values(k, vary[k]) for k in keys]
    points = [list(p) for p in itertools.product(*axes)]
    if executor is None:
        rows = _core.run_points(scenario, keys, points, threads)
    else:
        futures = [executor.submit(_sweep_chunk, scenario, keys, [points[i] for i in idx])
                   for idx in _chunks(len(points), chunk_size)]
        rows = [row for f in futures for row in f.result()]
    return _frame(rows, [dict(zip(keys, p)) for p in points])


def _tolerance_chunk(scenario, samples, seed, indices):
    return _core.tolerance_points(scenario, samples, seed, indices, 1)


class ToleranceResult:
    """Corners and Monte Carlo samples. spreads, runs, summary: DataFrames; worst(metric): the run with the
    largest value; counts: runs per overall status."""

    def __init__(self, spreads, rows):
        self.spreads = pd.DataFrame.from_records(spreads)
        names = [s["name"] for s in spreads]
        self.runs = _frame(rows, [dict(label=r["label"], **dict(zip(names, r["values"]))) for r in rows])
        metrics = [c for c in self.runs.columns if c not in ["label", "overall", "error", "failed_checks"] + names]
        ok = self.runs[self.runs["error"] == ""]
        q = {}
        for m in metrics:
            v = ok[m].to_numpy(dtype=float)
            v = v[np.isfinite(v)]
            if len(v):
                q[m] = {"min": v.min(), "p01": np.percentile(v, 1), "p50": np.percentile(v, 50),
                        "p99": np.percentile(v, 99), "max": v.max(), "mean": v.mean(),
                        "std": v.std(ddof=1) if len(v) > 1 else 0.0, "count": len(v)}
        self.summary = pd.DataFrame(q).T
        self.counts = self.runs["overall"].value_counts().to_dict()

    def worst(self, metric: str = "switch_voltage_peak_V") -> pd.Series:
        ok = self.runs[self.runs["error"] == ""]
        return ok.loc[ok[metric].astype(float).idxmax()]


def tolerance(scenario, samples: int = 1000, seed: int = 1, executor=None, threads: int = 0,
              chunk_size: Optional[int] = None) -> ToleranceResult:
    """Corners (every combination of the spreads' extremes) then `samples` Monte Carlo runs; sample i depends only on
    (seed, i), so the result is the same locally, on threads, or on an executor."""
    _require_scenario(scenario)
    _require_executor(executor)
    samples = _require_int(samples, "samples", 0, MAX_SAMPLES)
    seed = _require_int(seed, "seed", 0, 2 ** 64 - 1)
    _require_int(threads, "threads", 0, 1024)
    if chunk_size is not None:
        _require_int(chunk_size, "chunk_size", 1, MAX_SAMPLES)
    n = _core.tolerance_point_count(scenario, samples)
    spreads = _core.tolerance_spreads(scenario)
    if executor is None:
        rows = _core.tolerance_points(scenario, samples, seed, list(range(n)), threads)
    else:
        futures = [executor.submit(_tolerance_chunk, scenario, samples, seed, idx)
                   for idx in _chunks(n, chunk_size)]
        rows = [row for f in futures for row in f.result()]
    return ToleranceResult(spreads, rows)


def suggest(scenario, max_release_time_s: float, max_switch_voltage_V: float, threads: int = 0,
            time_metric: str = "release_time_s", kinds: Optional[List[str]] = None) -> pd.DataFrame:
    """Preferred-value clamps (E24 Zeners, TVS, E12 resistors, E3 RC pairs) ranked against the limits:
    those meeting both first, fastest release first. time_metric: what the release time is,
    "release_time_s" (coil current below release) or "contact_open_time_s" (armature model);
    kinds: only these clamp kinds (default: all)."""
    _require_scenario(scenario)
    _require_int(threads, "threads", 0, 1024)
    rows = _core.suggest(scenario, float(max_release_time_s), float(max_switch_voltage_V), threads, time_metric, list(kinds or []))
    lead = [{"clamp_kind": r["clamp_kind"], "parts": r["parts"], "meets_limits": r["meets_limits"],
             "release_margin": r["release_margin"], "voltage_margin": r["voltage_margin"]} for r in rows]
    return _frame(rows, lead)


class FaultReport:
    """Fault signatures. healthy: dict; faults: list of dicts; readings(): a DataFrame of every node healthy
    against faulty, drive on and off; by_symptom: {symptom: [fault labels]}."""

    def __init__(self, raw):
        self.healthy = AttrDict(raw["healthy"])
        self.faults = [AttrDict(f) for f in raw["faults"]]
        self.by_symptom = {}
        for f in self.faults:
            for s in f["symptoms"]:
                self.by_symptom.setdefault(s, []).append(f["part"] + " " + f["fault"])

    def readings(self) -> pd.DataFrame:
        rows = []
        for f in self.faults:
            for node, (h_on, h_off) in self.healthy["readings"].items():
                on, off = f["readings"].get(node, (float("nan"), float("nan")))
                rows.append({"part": f["part"], "fault": f["fault"], "symptoms": "; ".join(f["symptoms"]), "node": node,
                             "healthy_on_V": h_on, "faulty_on_V": on, "healthy_off_V": h_off, "faulty_off_V": off})
        return pd.DataFrame.from_records(rows)


def relay_calibration(scenario) -> Dict[str, Any]:
    """The relay armature model's calibration for the scenario's coil data: 'targets', a DataFrame of
    name, target, achieved, relative_error (operate and release voltage and time, closed inductance), and
    'parameters', a dict of the derived model values, each name ending in its SI unit."""
    _require_scenario(scenario)
    d = _core.relay_calibration(scenario)
    return {"targets": pd.DataFrame(d["targets"]).set_index("name"), "parameters": d["parameters"]}


def faults(scenario) -> FaultReport:
    """Single faults of every part of the driver (open, shorted, C–E short, base open, leaky junction, shorted
    turns, low supply): DC node voltages on and off, coil current, heat, switch-off, grouped by symptom."""
    _require_scenario(scenario)
    return FaultReport(_core.faults(scenario))
