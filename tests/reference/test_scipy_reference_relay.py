"""The numbers the C++ armature tests quote for the reference relay are the ones the independent
scipy solution gives (tests/reference/scipy_reference_relay.py; docs/derivations.md, "The reference
relay"). Tolerances: 5e-6 relative for closed forms (quoted to six digits: half a unit of the sixth digit); 1e-5 for the
contact opening (quoted to six digits, solved to 1e-11)."""
import os
import sys

import pytest

sys.path.insert(0, os.path.dirname(__file__))
import scipy_reference_relay as ref  # noqa: E402


def test_closed_forms_of_the_reference_relay():
    assert ref.inductance_H(ref.G_RESIDUAL_M) == pytest.approx(0.807838, rel=5e-6)
    assert ref.inductance_H(ref.G_OPEN_M) == pytest.approx(0.108747, rel=5e-6)
    assert -ref.pull_N(0.03, ref.G_RESIDUAL_M) == pytest.approx(5.19325, rel=5e-6)
    assert ref.release_current_A() == pytest.approx(9.30865e-3, rel=5e-6)
    assert ref.onset_s(0.7) == pytest.approx(2.13003e-3, rel=5e-6)
    assert ref.onset_s(12.7) == pytest.approx(0.824181e-3, rel=5e-6)
    assert ref.onset_s(24.7) == pytest.approx(0.516132e-3, rel=5e-6)


def test_contact_opening_with_hard_stops():
    t_open, speed = ref.contact_open(0.7)
    assert t_open == pytest.approx(3.23168e-3, rel=1e-5)
    assert speed == pytest.approx(0.251227, rel=1e-5)
