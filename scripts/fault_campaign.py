#!/usr/bin/python3
"""Every fault of random drivers must give readings: runs `faults` on the drivers of
scripts/tolerance_campaign.py (the same seeds; every other one with the supply's wiring and a
cable, every third with further channels or the armature model) and prints each driver whose
fault analysis, or one of whose faults, ended in an error. A technician's table of a failed
board must not have holes where the simulation gave up. Invented values. Not a test: most
drivers take well under a second, but a board with several channels at the end of a cable runs
every fault through all its lines, up to half a minute per fault (one such driver, seed 24, takes
about twenty minutes), so a range of 200 seeds can take an hour on two cores.

    PYTHONPATH=build/python /usr/bin/python3 scripts/fault_campaign.py 0 200
"""
import argparse
import os
import sys
from concurrent.futures import ProcessPoolExecutor

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import coilkick  # noqa: E402
import tolerance_campaign as campaign  # noqa: E402


def board(seed):
    """The scenario (dict) of one seed: the tolerance campaign's driver, with wiring on even
    seeds and extras (not a hold: faults judge one switch-off) on every third."""
    d = campaign.driver(seed, wiring=seed % 2 == 0)
    if seed % 3 == 0:
        d = campaign.add_extras(d, seed)
        d.pop("hold", None)
    return d


def faults_of(seed):
    d = board(seed)
    try:
        report = coilkick.faults(coilkick.scenario_from_dict(d))
    except Exception as e:  # an error is a finding: reported, not raised
        return seed, d["analysis"]["device_models"], "%s: %s" % (type(e).__name__, str(e)[:300]), []
    failed = [(f.get("part"), f.get("fault"), f.get("error")[:300]) for f in report.faults if f.get("error")]
    return seed, d["analysis"]["device_models"], None, failed


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("first", type=int, nargs="?", default=0)
    p.add_argument("last", type=int, nargs="?", default=200)
    p.add_argument("--workers", type=int, default=2)
    a = p.parse_args()
    count, with_errors = 0, 0
    with ProcessPoolExecutor(a.workers) as ex:
        for seed, level, whole, failed in ex.map(faults_of, range(a.first, a.last)):
            count += 1
            if whole or failed:
                with_errors += 1
                print("seed %d (%s): %s" % (seed, level, whole or "%d faults without a reading" % len(failed)), flush=True)
                for part, fault, error in failed:
                    print("    %s %s: %s" % (part, fault, error), flush=True)
            if count % 20 == 0:
                print("%d of %d drivers" % (count, a.last - a.first), file=sys.stderr, flush=True)
    print("%d drivers: %d with an error" % (count, with_errors))
    return 1 if with_errors else 0


if __name__ == "__main__":
    sys.exit(main())
