"""One BLAS thread per solve: the limit as threadpoolctl itself reports it."""

from __future__ import annotations

import os
import subprocess
import sys

from phasorbench import blas

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def test_pin_loaded_limits_every_blas_library_to_one_thread():
    from threadpoolctl import threadpool_info

    # reference: threadpoolctl.threadpool_info(), which asks each loaded BLAS library
    limiter = blas.pin_loaded()
    try:
        libraries = [i for i in threadpool_info() if i["user_api"] == "blas"]
        assert libraries and all(i["num_threads"] == 1 for i in libraries)
    finally:
        limiter.restore_original_limits()


def test_command_line_asks_for_one_thread_unless_the_user_chose():
    code = ("import os, sys; from phasorbench.cli import main; "
            "main(['check', sys.argv[1]]); print(os.environ['OPENBLAS_NUM_THREADS'])")
    path = os.path.join(ROOT, "samples", sorted(os.listdir(os.path.join(ROOT, "samples")))[0])
    env = {k: v for k, v in os.environ.items() if k not in blas.THREAD_VARIABLES}
    env["PYTHONPATH"] = os.path.join(ROOT, "server")
    # common practice, no source: the variable OpenBLAS reads when it is loaded
    out = subprocess.run([sys.executable, "-c", code, path], env=env, capture_output=True,
                         text=True, check=True).stdout
    assert out.strip().splitlines()[-1] == "1"
    env["OPENBLAS_NUM_THREADS"] = "2"
    out = subprocess.run([sys.executable, "-c", code, path], env=env, capture_output=True,
                         text=True, check=True).stdout
    assert out.strip().splitlines()[-1] == "2"
