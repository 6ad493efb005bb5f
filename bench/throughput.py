"""Tolerance-run throughput: runs per second on 1 and 2 threads, the second thread's speed-up,
and the pwl level against the physical level on the same driver; each measured in this run. Also
one Python run() call of the pwl driver against its runs inside a tolerance analysis on one
thread: what a call costs beyond its switch-off (each call waits for its work on a helper thread
that Ctrl-C can stop).
Targets (benchmarks, not tests): a 10,000-run physical tolerance analysis in at most 3 s on 2 cores, at least
1.8x from the second thread, pwl at least 10x faster than physical."""
import os
import time

import coilkick

RELAY = {
    "name": "throughput relay",
    "supply": {"voltage": "12 V", "tolerance": "10 %"},
    "drive": {"high_level": "5 V", "switch_off_at": "100 us"},
    "coil": {"resistance": "400 ohm", "inductance": "600 mH", "release_current": "3 mA"},
    "switch": {"topology": "low_side_npn", "part": "npn_small_signal_40v", "base_resistor": "1 kohm"},
    "clamp": {"kind": "diode_zener", "diode_part": "rectifier_1a", "zener_part": "zener_500mw_15v"},
    "analysis": {"model_level": "physical"},
    "tolerances": {"coil_resistance": "10 %", "inductance": "10 %"},
}


def rate_of(s, threads, samples, repeats=3):
    """Runs per second of scenario s, best of `repeats` (the least disturbed by other work on the machine)."""
    coilkick.tolerance(s, samples=2, seed=1, threads=threads)  # warm-up
    best = 0.0
    for _ in range(repeats):
        t0 = time.perf_counter()
        r = coilkick.tolerance(s, samples=samples, seed=1, threads=threads)
        best = max(best, len(r.runs) / (time.perf_counter() - t0))
    return best


def rate(level, threads, samples):
    d = dict(RELAY)
    d["analysis"] = {"model_level": level}
    return rate_of(coilkick.scenario_from_dict(d), threads, samples)


def single_call_s(level, calls=30):
    """The quickest of `calls` Python run() calls of the driver at `level`, seconds."""
    d = dict(RELAY)
    d["analysis"] = {"model_level": level}
    s = coilkick.scenario_from_dict(d)
    coilkick.run(s)  # warm-up
    best = float("inf")
    for _ in range(calls):
        t0 = time.perf_counter()
        coilkick.run(s)
        best = min(best, time.perf_counter() - t0)
    return best


def main():
    phys1, phys2 = rate("physical", 1, 100), rate("physical", 2, 200)
    pwl1, pwl2 = rate("pwl", 1, 400), rate("pwl", 2, 800)
    call = single_call_s("pwl")
    # The bundled fan relay (its armature model, physical models, its own spreads).
    fan = coilkick.load_scenario(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "models", "scenarios", "fan_relay.toml"))
    fan2 = rate_of(fan, 2, 60, repeats=2)
    print("tolerance throughput (relay driver, diode + Zener):")
    print("  physical: %.0f runs/s on 1 thread, %.0f on 2 (x%.2f); 10,000 runs in %.1f s" % (phys1, phys2, phys2 / phys1, 1e4 / phys2))
    print("  pwl:      %.0f runs/s on 1 thread, %.0f on 2 (x%.2f); 10,000 runs in %.1f s" % (pwl1, pwl2, pwl2 / pwl1, 1e4 / pwl2))
    print("  the bundled fan relay (armature model): %.0f runs/s on 2 threads; 10,000 runs in %.1f s" % (fan2, 1e4 / fan2))
    print("  one Python run() call, pwl: %.2f ms against %.2f ms per run inside a tolerance analysis (x%.1f)"
          % (call * 1e3, 1e3 / pwl1, call * pwl1))
    print("tolerance_throughput second_thread_speedup=%.2f pwl_over_physical=%.1f seconds_for_10000_physical=%.1f seconds_for_10000_pwl=%.1f "
          "seconds_for_10000_fan_relay=%.1f" % (phys2 / phys1, pwl1 / phys1, 1e4 / phys2, 1e4 / pwl2, 1e4 / fan2))


if __name__ == "__main__":
    main()
