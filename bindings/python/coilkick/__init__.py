"""coilkick — switch-off transients of relay, solenoid and contactor drivers, and clamp choice.

Load a scenario (file or dict in the scenario schema, see README "Scenario files"), then:

    import coilkick
    s = coilkick.load_scenario("models/scenarios/greenhouse_valve.toml")
    r = coilkick.run(s)                 # RunResult: metrics, checks, waveforms (numpy, no copy)
    r.metrics.release_time_s            # every metric name ends with its SI unit
    rows = coilkick.compare(s)          # every applicable clamp, fastest release first
    df = coilkick.sweep(s, {"clamp.zener.overrides.breakdown_voltage": coilkick.span(5.0, 40.0, 36)})
    t = coilkick.tolerance(s, samples=1000, seed=1)
    f = coilkick.fit(s, coilkick.read_capture("capture.csv"))   # the coil fitted to a bench capture

`sweep` and `tolerance` take any concurrent.futures-style executor (a dask.distributed Client
works as one). Plots: coilkick.plot.
"""
import os as _os

from . import _core
from ._core import CatalogueError, ScenarioError, SimulationError, default_models_directory, numeric_keys
from .review_page import report
from .bench_fit import FitResult, fit, model_trace, read_capture
from .api import (ComparisonRow, FaultReport, RunResult, Span, ToleranceResult, compare, faults, load_scenario, part_info,
                  part_names, relay_calibration, run, scenario_from_dict, span, suggest, sweep, tolerance)

__version__ = _core.__version__  # the CMake project version, as `coilkick --version` says


def _find_installed_models():
    # An installed package finds the models it was installed with: coilkick/models (pip, wheel)
    # or <prefix>/share/coilkick/models next to <prefix>/lib/python3/dist-packages/coilkick
    # (cmake --install, the Debian package). $COILKICK_MODELS still wins.
    here = _os.path.dirname(_os.path.abspath(__file__))
    for candidate in (_os.path.join(here, "models"), _os.path.join(here, "..", "..", "..", "..", "share", "coilkick", "models")):
        if _os.path.isdir(_os.path.join(candidate, "parts")):
            _core.set_installed_models_directory(_os.path.normpath(candidate))
            return


_find_installed_models()

CAUTION = ("A simulation is not a qualification. Build and measure the real driver at its worst-case supply and "
           "temperature before relying on it. Where relays or contactors switch mains loads, wiring and checks "
           "belong to qualified people; local codes and licensed practice take precedence.")

__all__ = ["CAUTION", "CatalogueError", "ComparisonRow", "RunResult", "ScenarioError", "SimulationError",
           "ToleranceResult", "FaultReport", "FitResult", "compare", "fit", "model_trace", "read_capture", "faults", "default_models_directory", "load_scenario", "numeric_keys", "part_info",
           "part_names", "report", "run", "scenario_from_dict", "Span", "span", "suggest", "sweep", "tolerance"]
