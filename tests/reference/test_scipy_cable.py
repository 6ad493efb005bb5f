"""The driver of test_scipy_reference.py with its coil at the far end of 100 m of two-core cable,
written out independently: the cable as a ladder of lumped sections (series R/N and L/N, shunt
C/N per section — the method of lines for the telegrapher's equations, e.g. Pozar, "Microwave
Engineering", 4th ed., §2.1, section number from memory), the devices from the textbook
equations of scipy_driver_equations.py, solved with scipy's Radau. The library models the same
cable as a line by its travelling waves (engine/transmission_line.hpp). Compared on what the
cable must not get wrong whatever its model: the on-state current, the release time and the
clamp's energy; and on the switch's peak, where the two models of the fronts differ a little."""
import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import fsolve

import coilkick

from scipy_driver_equations import (C_NODE, DIODE_OVERRIDES, R_B, R_COIL, R_OUT, SWITCH_OVERRIDES, T_FALL, T_OFF, V_HIGH,
                                    VS, currents, v_logic)

L, I_REL = 0.6, 3e-3
LENGTH_M, R_PER_M, L_PER_M, C_PER_M = 100.0, 0.052, 0.55e-6, 80e-12  # the library's default cable
N = 40  # sections: 2.5 m each, a section's own resonance at ~170 MHz
C_FAR = 0.5e-12  # the library's 1 pF stray on each of the coil's two nodes, in series across the pair


def scenario():
    return coilkick.scenario_from_dict({
        "name": "independent reference with a cable",
        "supply": {"voltage": VS},
        "cable": {"length": LENGTH_M},
        "drive": {"high_level": V_HIGH, "output_resistance": R_OUT, "fall_time": T_FALL, "switch_off_at": T_OFF},
        "coil": {"resistance": R_COIL, "inductance": L, "release_current": I_REL},
        "switch": {"topology": "low_side_npn", "part": "npn_small_signal_40v", "base_resistor": R_B,
                   "board_stray_capacitance": 0.0, "overrides": SWITCH_OVERRIDES},
        "clamp": {"kind": "diode", "diode_part": "rectifier_1a", "diode": {"overrides": DIODE_OVERRIDES}},
        "analysis": {"model_level": "physical", "relative_tolerance": 1e-8},
    })


R_S, L_S, C_S = R_PER_M * LENGTH_M / N, L_PER_M * LENGTH_M / N, C_PER_M * LENGTH_M / N


def rates(t, y):
    """y = v_out, vb, vc, i_1..i_N (section currents), u_1..u_N (the pair's voltage after each
    section), i_coil, clamp energy. The pair's voltage at the board is V_s − vc."""
    v_out, vb, vc = y[0], y[1], y[2]
    i = y[3:3 + N]
    u = y[3 + N:3 + 2 * N]
    i_coil = y[3 + 2 * N]
    ic, ib, i_d = currents(vb, vc)
    u_before = np.concatenate([[VS - vc], u[:-1]])
    di = (u_before - u - R_S * i) / L_S
    i_after = np.concatenate([i[1:], [i_coil]])
    c_shunt = np.full(N, C_S)
    c_shunt[-1] += C_FAR
    du = (i - i_after) / c_shunt
    return np.concatenate([[((v_logic(t) - v_out) / R_OUT - (v_out - vb) / R_B) / C_NODE,
                            ((v_out - vb) / R_B - ib) / C_NODE,
                            (i[0] - ic - i_d) / C_NODE],
                           di, du, [(u[-1] - R_COIL * i_coil) / L, (vc - VS) * i_d]])


def sparsity():
    """Which states each rate depends on (for scipy's grouped finite-difference Jacobian)."""
    n = 3 + 2 * N + 2
    s = np.zeros((n, n), dtype=bool)
    s[0, [0, 1]] = s[1, [0, 1, 2]] = s[2, [1, 2, 3]] = True
    ii, iu, ic = 3, 3 + N, 3 + 2 * N
    for k in range(N):
        s[ii + k, [ii + k, iu + k]] = True
        s[ii + k, 2 if k == 0 else iu + k - 1] = True
        s[iu + k, [ii + k, ic if k == N - 1 else ii + k + 1]] = True
    s[ic, [iu + N - 1, ic]] = True
    s[ic + 1, [1, 2]] = True
    return s


@pytest.fixture(scope="module")
def reference():
    def dc(z):
        v_out, vb, vc, i0 = z
        ic, ib, i_d = currents(vb, vc)
        r_loop = R_COIL + R_S * N
        return [(V_HIGH - v_out) / R_OUT - (v_out - vb) / R_B, (v_out - vb) / R_B - ib, i0 - ic - i_d,
                VS - vc - r_loop * i0]
    v_out, vb, vc, i0 = fsolve(dc, [4.0, 0.75, 0.1, 0.03], xtol=1e-13)
    u0 = VS - vc - R_S * i0 * np.arange(1, N + 1)
    y0 = np.concatenate([[v_out, vb, vc], np.full(N, i0), u0, [i0, 0.0]])
    release = lambda t, y: y[3 + 2 * N] - I_REL
    release.direction = -1
    decayed = lambda t, y: y[3 + 2 * N] - 0.01 * i0
    decayed.direction = -1
    decayed.terminal = True
    atol = np.concatenate([[1e-9] * 3, [1e-12] * N, [1e-9] * N, [1e-13, 1e-15]])
    after = solve_ivp(rates, [T_OFF, T_OFF + 20e-3], y0, method="Radau", rtol=1e-7, atol=atol, jac_sparsity=sparsity(),
                      events=[release, decayed], dense_output=True, max_step=2e-5)
    assert after.status == 1, after.message
    t = np.concatenate([np.linspace(T_OFF, T_OFF + 20e-6, 40001), after.t])
    t = np.sort(t[t <= after.t[-1]])
    peak = after.sol(t)[2].max()
    return {"i0": i0, "peak": peak, "release": after.t_events[0][0] - T_OFF, "clamp_energy": after.y[-1, -1]}


def test_a_cable_as_a_line_agrees_with_an_independent_ladder_solved_by_scipy(reference):
    m = coilkick.run(scenario()).metrics
    # On-state: the same DC equations (the cable is its loop resistance), measured 3e-12 apart.
    assert m["coil_current_at_switch_off_A"] == pytest.approx(reference["i0"], rel=1e-9)
    # Measured against this ladder (N = 40; 20 sections move the release time and the energy by a
    # tenth of the difference, the peak by a third; scipy at rtol 1e-9 moves none by 1e-10): release time 4.5e-6, clamp
    # energy 5.4e-5 (the two cable models lose the fronts' energy differently: the line's
    # high-frequency low-pass against the ladder's dispersion), switch peak 2.6e-4 (the front's
    # shape). Each tolerance is about four times the measured difference.
    assert m["release_time_s"] == pytest.approx(reference["release"], rel=2e-5)
    assert m["clamp_energy_J"] == pytest.approx(reference["clamp_energy"], rel=2e-4)
    assert m["switch_voltage_peak_V"] == pytest.approx(reference["peak"], rel=1e-3)
