"""Sweeps and tolerance runs on a dask.distributed LocalCluster (loopback only) give the same
numbers as the local run."""
import pandas as pd
import pytest

import coilkick

import distributed  # a project dependency (python3-distributed): missing is a failure, not a skip


@pytest.fixture(scope="module")
def client():
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                       dashboard_address=None, protocol="tcp")
    c = distributed.Client(cluster)
    yield c
    c.close()
    cluster.close()


def test_sweep_on_dask_equals_local(client, relay_dict):
    s = coilkick.scenario_from_dict(relay_dict)
    vary = {"clamp.zener.overrides.breakdown_voltage": coilkick.span(5.0, 40.0, 8)}
    local = coilkick.sweep(s, vary, threads=1)
    remote = coilkick.sweep(s, vary, executor=client, chunk_size=3)
    pd.testing.assert_frame_equal(local, remote)


def test_tolerance_on_dask_equals_local(client, relay_dict):
    s = coilkick.scenario_from_dict(relay_dict).with_value("coil.inductance", 0.5)
    local = coilkick.tolerance(s, samples=6, seed=11, threads=2)
    remote = coilkick.tolerance(s, samples=6, seed=11, executor=client, chunk_size=5)
    pd.testing.assert_frame_equal(local.runs, remote.runs)
    pd.testing.assert_frame_equal(local.summary, remote.summary)
