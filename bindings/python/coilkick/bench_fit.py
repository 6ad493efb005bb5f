"""Fits to bench captures: read a capture, fit a scenario's keys to it, the model's trace at a
capture's times (coilkick.read_capture, coilkick.fit, coilkick.model_trace)."""
import datetime
import math
import os
from typing import Dict, List, Optional

import numpy as np
import pandas as pd

from . import _core
from .api import AttrDict, _require_scenario

_ROLES = ("time", "current", "voltage", "contact", "drive")
_COLUMN_OF_ROLE = {"time": "time_s", "current": "current_A", "voltage": "voltage_V", "contact": "contact", "drive": "drive_V"}


def read_capture(path, channels: Optional[Dict[str, str]] = None, units: Optional[Dict[str, str]] = None,
                 shunt_ohm: Optional[float] = None, time_zero_at_edge: bool = False) -> pd.DataFrame:
    """A capture CSV as an oscilloscope or logger writes it, as a DataFrame with columns time_s,
    current_A, voltage_V (and contact, drive_V where mapped). `channels` maps roles (time, current,
    voltage, contact, drive) to column names or 1-based numbers (default time=1, current=2, voltage=3);
    `units` gives units of columns whose header has none; `shunt_ohm`: the current column is a
    shunt's voltage; `time_zero_at_edge`: times counted from the switch voltage's edge (half way
    from its first value to the value farthest from it), as model_trace counts them. Errors:
    ValueError "file:line: ..."."""
    ch = {"current": "2"}
    for role, column in (channels or {}).items():
        if role not in _ROLES:
            raise ValueError("channels: unknown role %r (the roles are %s)" % (role, ", ".join(_ROLES)))
        ch[role] = str(column)
    if "voltage" not in ch and "drive" not in ch:
        ch["voltage"] = "3"
    d = _core.read_capture(os.fspath(path), ch, {str(k): str(v) for k, v in (units or {}).items()},
                           math.nan if shunt_ohm is None else float(shunt_ohm), bool(time_zero_at_edge))
    frame = {"time_s": d["time_s"], "current_A": d["current_A"]}
    if d["voltage_V"]:
        frame["voltage_V"] = d["voltage_V"]
    if d["contact"]:
        frame["contact"] = d["contact"]
    if d["drive_V"]:
        frame["drive_V"] = d["drive_V"]
    return pd.DataFrame(frame)


def model_trace(scenario, edge: str, times_after_edge_s, time_zero: str = "switch-voltage") -> pd.DataFrame:
    """What the model shows at times after its own edge ('switch-off' or 'switch-on'; time zero
    at the 'switch-voltage' or the 'drive' edge): a DataFrame time_after_edge_s, current_A (through
    the coil's terminals, as a series shunt measures it), voltage_V — e.g. to compare with a scope
    before fitting, or to make a synthetic capture."""
    _require_scenario(scenario)
    t = np.asarray(times_after_edge_s, dtype=float)
    d = _core.model_trace(scenario, edge, t.tolist(), time_zero)
    return pd.DataFrame({"time_after_edge_s": t, "current_A": d["current_A"], "voltage_V": d["voltage_V"]})


class FitResult:
    """A scenario fitted to a capture.
    parameters: DataFrame key, unit, start, value, standard_error, determined;
    frame: DataFrame time_after_edge_s, measured_current_A, model_current_A, residual (in noise units);
    edge ('switch-off' / 'switch-on'), time_zero ('switch-voltage' / 'drive' edge), residual_rms, undetermined, time_shift_s, current_noise_A,
    iterations, engine_runs; switch-on: measured_armature_motion, model_armature_motion (start_s,
    end_s), model_operate_time_s; with a contact channel: measured_release_current_A."""

    def __init__(self, core_fit, measured_current_A, capture_name):
        self._fit = core_fit
        self.capture_name = capture_name
        units = dict(_core.numeric_keys())
        self.parameters = pd.DataFrame({
            "key": core_fit.keys,
            "unit": [units.get(k, "") for k in core_fit.keys],
            "start": core_fit.start_values,
            "value": core_fit.values,
            "standard_error": core_fit.standard_errors,
            "determined": [k not in core_fit.undetermined for k in core_fit.keys],
        })
        model = np.asarray(core_fit.model_current_A)
        measured = np.asarray(measured_current_A, dtype=float)
        self.frame = pd.DataFrame({
            "time_after_edge_s": core_fit.time_after_edge_s,
            "measured_current_A": measured,
            "model_current_A": model,
            "residual": (measured - model) / core_fit.current_noise_A,
        })
        for name in ("edge", "time_zero", "residual_rms", "undetermined", "time_shift_s", "time_shift_error_s", "current_noise_A", "iterations",
                     "engine_runs", "model_operate_time_s", "measured_release_current_A", "measured_contact_time_s"):
            setattr(self, name, getattr(core_fit, name))
        self.measured_armature_motion = AttrDict(core_fit.measured_armature_motion)
        self.model_armature_motion = AttrDict(core_fit.model_armature_motion)

    def value(self, key: str) -> float:
        """The fitted value of one key (SI units)."""
        row = self.parameters[self.parameters.key == key]
        if row.empty:
            raise KeyError("%r was not fitted (fitted: %s)" % (key, ", ".join(self.parameters.key)))
        return float(row.value.iloc[0])

    def coil_record(self, name: str, date: Optional[str] = None) -> str:
        """The fitted coil as a models/coils record (TOML text): every value with unit and source."""
        return self._fit.coil_record(name, self.capture_name, date or datetime.date.today().isoformat())


def fit(scenario, capture: pd.DataFrame, parameters: Optional[List[str]] = None, noise_A: Optional[float] = None,
        columns: Optional[Dict[str, str]] = None, capture_name: str = "capture") -> FitResult:
    """Fit the scenario's numeric keys (`parameters`, default: inductance with the core loss at
    switch-off, with the resistance at switch-on) to a capture: a DataFrame with time_s,
    current_A, and voltage_V or drive_V (optionally contact) — read_capture's columns, or others
    named by `columns` ({"time": ..., "current": ..., "voltage": ..., "contact": ..., "drive": ...}).
    The edge comes from the drive's direction where there is a drive column (time zero at its edge),
    else the switch voltage's; `noise_A` defaults to the spread of the current before the edge."""
    _require_scenario(scenario)
    if not isinstance(capture, pd.DataFrame):
        raise TypeError("capture: a pandas DataFrame is needed (coilkick.read_capture makes one)")
    names = dict(_COLUMN_OF_ROLE)
    for role, column in (columns or {}).items():
        if role not in _ROLES:
            raise ValueError("columns: unknown role %r (the roles are %s)" % (role, ", ".join(_ROLES)))
        names[role] = column
    for role in ("time", "current"):
        if names[role] not in capture.columns:
            raise ValueError("capture: no column %r for the %s (columns: %s)" % (names[role], role, ", ".join(map(str, capture.columns))))
    if names["voltage"] not in capture.columns and names["drive"] not in capture.columns:
        raise ValueError("capture: no column %r for the switch voltage nor %r for the drive (columns: %s)"
                         % (names["voltage"], names["drive"], ", ".join(map(str, capture.columns))))

    def optional(role):
        return capture[names[role]].to_numpy(float).tolist() if names[role] in capture.columns else []
    if noise_A is not None and not (noise_A > 0):
        raise ValueError("noise_A: must be > 0")
    current = capture[names["current"]].to_numpy(float)
    core = _core.fit_capture(scenario, capture[names["time"]].to_numpy(float).tolist(), current.tolist(), optional("voltage"),
                             optional("contact"), optional("drive"), list(parameters or []), 0.0 if noise_A is None else float(noise_A))
    return FitResult(core, current, capture_name)
