"""Fixture of the report tests: the coilkick program (CTest sets COILKICK_PROGRAM)."""
import os

import pytest


@pytest.fixture
def program():
    return os.environ.get("COILKICK_PROGRAM", os.path.join(os.path.dirname(__file__), "..", "..", "build", "bin", "coilkick"))
