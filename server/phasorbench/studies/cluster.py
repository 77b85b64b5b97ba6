"""Tolerance chunks on a Dask distributed cluster (the optional ``cluster`` extra).

Each worker reads the circuit text again, builds the same batch and draws its chunk from
the chunk's own child of the one ``SeedSequence``: the numbers equal the in-process run.
Without the extra, ``--scheduler`` is a clear error and runs stay in-process.
"""

from __future__ import annotations

from ..errors import CircuitError, Diagnostic


def run_chunk(text: str, filename: str, probe_texts: list[str], limits: list[str],
              seed: int, chunk: int, runs: int):
    """One chunk's (values, bad), computed wherever this runs (a worker)."""
    from ..workflow import read_circuit
    from .parameters import draw_scales
    from .tolerance import prepare
    circuit = read_circuit(text, filename)
    batch = prepare(circuit, probe_texts, limits=limits)[0]
    result = batch.run(draw_scales(batch.q, seed, chunk, runs))
    return result.values, result.bad


def cluster_chunks(circuit, probe_texts, limits, address: str, client=None):
    """A ``chunks`` callable for ``monte_carlo`` that maps the chunks over the cluster at
    ``address`` (or over ``client``, an open ``dask.distributed.Client``)."""
    try:
        from dask.distributed import Client
    except ImportError:
        raise CircuitError([Diagnostic(
            "a scheduler needs the optional 'cluster' extra (Dask distributed)",
            "pip install 'phasorbench[cluster]', or leave out the scheduler to run "
            "in-process")]) from None
    texts, limits = list(probe_texts or []), list(limits or [])

    def run(seed, chunks):
        own = client is None
        try:
            c = Client(address, timeout="10s") if own else client
        except (OSError, TimeoutError) as exc:
            raise CircuitError([Diagnostic(f"cannot reach the scheduler at {address}: "
                                           f"{exc}", "check the address, e.g. "
                                           "tcp://10.0.0.5:8786, and that it runs")]) \
                from None
        try:
            futures = [c.submit(run_chunk, circuit.text, circuit.filename, texts, limits,
                                seed, k, size, pure=False) for k, size in chunks]
            return c.gather(futures)
        finally:
            if own:
                c.close()
    return run
