"""Tolerance chunks on a two-worker Dask LocalCluster on loopback give the numbers of the
in-process run (studies.md: same seed, same numbers, either way)."""

from __future__ import annotations

import pytest

from phasorbench.studies.tolerance import run_tolerance
from phasorbench.workflow import read_circuit

distributed = pytest.importorskip("dask.distributed")

FILTER = """frequency 400 Hz
Cb = 2.2 uF tol 10%
V1: voltage in -> 0 10 V
R1: resistor in -> a 47 ohm tol 5% normal
L1: inductor a -> out 22 mH tol 10%
C1: capacitor out -> 0 Cb
C2: capacitor a -> 0 Cb
"""


@pytest.mark.slow
def test_local_cluster_equals_in_process():
    from phasorbench.studies.cluster import cluster_chunks
    circuit = read_circuit(FILTER)
    here = run_tolerance(circuit, ["V(out)"], runs=4500, seed=11, limits=["V(out) 0..5"])
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=":0") as cluster:
        with distributed.Client(cluster) as client:
            chunks = cluster_chunks(circuit, ["V(out)"], ["V(out) 0..5"], cluster
                                    .scheduler_address, client=client)
            there = run_tolerance(circuit, ["V(out)"], runs=4500, seed=11,
                                  limits=["V(out) 0..5"], chunks=chunks)
    # common practice, no source: seeded chunks make the two runs identical
    assert there == here
