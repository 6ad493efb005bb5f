"""The reference relay of tests/relay/test_armature.cpp, solved here independently of coilkick:
closed forms for its inductance, force and release current, and scipy's solve_ivp (Radau) for its
release on an ideal constant-voltage clamp with *hard* stops (the armature rests on the closed
stop until the spring force exceeds the magnetic pull, then moves freely). The derivation is in
docs/derivations.md, "The reference relay"; run this file to print the numbers quoted there.

Symbols (invented relay, SI units): N turns, A pole area, g_core the iron path as an equivalent
gap, g the working gap; L(g) = mu0*N^2*A/(g + g_core); pull F(i, g) = -mu0*N^2*A*i^2/(2*(g + g_core)^2)
(towards closing); return spring F_s(g) = F_open + k*(g_open - g) (towards opening); viscous
damping c; moving mass m; coil resistance R; supply V_s; clamp voltage V_c across the coil.
"""
import math

import numpy as np
from scipy.integrate import solve_ivp

MU0 = 1.25663706212e-6   # vacuum permeability, CODATA 2018 (H/m)
TURNS = 1500.0
AREA_M2 = 20e-6
G_CORE_M = 40e-3 / 2000.0  # 40 mm of iron at relative permeability 2000, as an air-gap length
G_RESIDUAL_M, G_OPEN_M, G_MAKE_M = 0.05e-3, 0.5e-3, 0.15e-3
MASS_KG = 1e-3
SPRING_RATE_N_PER_M = 200.0
SPRING_AT_CLOSED_N = 0.5
DAMPING_N_S_PER_M = 0.05
R_OHM, SUPPLY_V = 400.0, 12.0


def inductance_H(g):
    return MU0 * TURNS ** 2 * AREA_M2 / (g + G_CORE_M)


def pull_N(i, g):
    return -MU0 * TURNS ** 2 * AREA_M2 * i ** 2 / (2.0 * (g + G_CORE_M) ** 2)


def spring_N(g):
    return SPRING_AT_CLOSED_N - SPRING_RATE_N_PER_M * (g - G_RESIDUAL_M)


def release_current_A():
    # At the closed stop the armature leaves when the spring force exceeds the pull.
    return math.sqrt(2.0 * spring_N(G_RESIDUAL_M) * (G_RESIDUAL_M + G_CORE_M) ** 2 / (MU0 * TURNS ** 2 * AREA_M2))


def onset_s(clamp_V):
    # On the stop L is constant: i(t) = (I0 + Vc/R)·e^(−t/τ) − Vc/R; it reaches I_rel at this time.
    i0, i_rel = SUPPLY_V / R_OHM, release_current_A()
    tau = inductance_H(G_RESIDUAL_M) / R_OHM
    return tau * math.log((i0 + clamp_V / R_OHM) / (i_rel + clamp_V / R_OHM))


def contact_open(clamp_V):
    """Time from the clamp taking over to the gap passing the make position, and the speed there."""
    t1 = onset_s(clamp_V)
    i_rel = release_current_A()
    flux0 = inductance_H(G_RESIDUAL_M) * i_rel

    def rates(_t, y):
        flux, g, u = y
        i = flux / inductance_H(g)
        # The ideal clamp holds −V_c across the coil while it conducts (i > 0); it cannot
        # conduct backwards.
        dflux = -clamp_V - R_OHM * i if i > 0.0 else -R_OHM * i
        force = pull_N(i, g) + spring_N(g) - DAMPING_N_S_PER_M * u
        return [dflux, u, force / MASS_KG]

    def at_make(_t, y):
        return y[1] - G_MAKE_M
    at_make.terminal = True
    at_make.direction = 1

    sol = solve_ivp(rates, (t1, t1 + 50e-3), [flux0, G_RESIDUAL_M, 0.0], method="Radau", rtol=1e-11, atol=[1e-14, 1e-14, 1e-12],
                    events=at_make, dense_output=True)
    t_open = float(sol.t_events[0][0])
    return t_open, float(sol.y_events[0][0][2])


def main():
    print("closed inductance L(0.05 mm) = %.6g H" % inductance_H(G_RESIDUAL_M))
    print("open inductance L(0.5 mm) = %.6g H" % inductance_H(G_OPEN_M))
    print("pull at 30 mA on the closed stop = %.6g N" % -pull_N(0.03, G_RESIDUAL_M))
    print("release current = %.6g A" % release_current_A())
    for vc in (0.7, 12.7, 24.7):
        print("onset on a %.1f V clamp = %.6g s" % (vc, onset_s(vc)))
    t_open, speed = contact_open(0.7)
    print("contact opens on a 0.7 V clamp at %.6g s, speed %.6g m/s" % (t_open, speed))


if __name__ == "__main__":
    main()
