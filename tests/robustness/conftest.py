"""Shared fixtures of the Python tests (run by CTest with PYTHONPATH=build/python)."""
import os

import pytest

import coilkick

MODELS = coilkick.default_models_directory()


@pytest.fixture
def valve():
    return coilkick.load_scenario(os.path.join(MODELS, "scenarios", "greenhouse_valve.toml"))


@pytest.fixture
def relay_dict():
    """A 12 V / 400 ohm / 0.6 H relay-like coil on a low-side NPN (invented test values), pwl models."""
    return {
        "name": "python test relay",
        "supply": {"voltage": "12 V", "tolerance": "10 %"},
        "drive": {"high_level": "5 V", "switch_off_at": "100 us"},
        "coil": {"resistance": "400 ohm", "inductance": "600 mH", "release_current": "3 mA"},
        "switch": {"topology": "low_side_npn", "part": "npn_small_signal_40v", "base_resistor": "1 kohm"},
        "clamp": {"kind": "diode_zener", "diode_part": "rectifier_1a", "zener_part": "zener_500mw_15v"},
        "analysis": {"model_level": "pwl"},
        "tolerances": {"coil_resistance": "10 %"},
    }


@pytest.fixture
def program():
    return os.environ.get("COILKICK_PROGRAM", os.path.join(os.path.dirname(__file__), "..", "..", "build", "bin", "coilkick"))
