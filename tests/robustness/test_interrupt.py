"""Ctrl-C stops long work: in Python within a second (KeyboardInterrupt, interpreter still usable),
on the command line at once with a short message, exit 130 and no output file."""
import os
import signal
import subprocess
import threading
import time

import pytest

import coilkick

from test_bad_input import valid


def _interrupt_after(seconds, sent):
    def send():
        sent.append(time.perf_counter())
        os.kill(os.getpid(), signal.SIGINT)
    timer = threading.Timer(seconds, send)
    timer.start()
    return timer


@pytest.mark.parametrize("call", [
    lambda s: coilkick.tolerance(s, samples=200000, seed=1, threads=2),
    lambda s: coilkick.sweep(s, {"coil.inductance": coilkick.span(0.1, 1.0, 100000)}, threads=2),
], ids=["tolerance", "sweep"])
def test_ctrl_c_stops_a_long_python_call_within_a_second(call):
    s = valid()
    sent = []
    timer = _interrupt_after(0.5, sent)
    with pytest.raises(KeyboardInterrupt):
        call(s)
    stopped = time.perf_counter()
    timer.join()
    # 200,000 runs take minutes; from the signal to the KeyboardInterrupt at most a second.
    assert stopped - sent[0] < 1.0, stopped - sent[0]
    # The interpreter (and the library) still work.
    assert coilkick.run(s).metrics["release_time_s"] > 0


def test_ctrl_c_stops_the_command_at_once_without_an_output_file(tmp_path, program):
    scenario = tmp_path / "s.toml"
    scenario.write_text(
        '[supply]\nvoltage = "12 V"\n[coil]\nresistance = "400 ohm"\ninductance = "600 mH"\nrelease_current = "3 mA"\n'
        '[switch]\ntopology = "low_side_npn"\npart = "npn_small_signal_40v"\nbase_resistor = "1 kohm"\n'
        '[clamp]\nkind = "diode"\ndiode_part = "rectifier_1a"\n')
    out = tmp_path / "sweep.csv"
    p = subprocess.Popen([program, "sweep", str(scenario), "--quiet", "--vary", "coil.inductance=0.1:1:100000", "--output", str(out)],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(1.0)
    sent = time.perf_counter()
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=30)
    assert time.perf_counter() - sent < 1.0
    assert p.returncode == 130
    assert "interrupted" in err
    assert not out.exists()
