"""A minimal solver for the benchmark's mesh circuits: the yardstick phasorbench is timed against.

Plain line splitting (the mesh's fixed shapes only), vectorised MNA, SuperLU, powers and
one json.dumps of a result with the contract's shape. No checks, no diagnostics.

    python benchmarks/baseline_solver.py mesh.circuit > out.json
"""

from __future__ import annotations

import json
import math
import sys

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

SCALE = {"ohm": 1.0, "mH": 1e-3, "uF": 1e-6, "V": 1.0}


def phasors(values):
    deg = np.degrees(np.angle(values))
    return [{"re": a, "im": b, "mag": c, "deg": d} for a, b, c, d in
            zip(values.real.tolist(), values.imag.tolist(), np.abs(values).tolist(),
                deg.tolist())]


def main(path: str) -> None:
    names, kinds, ps, ns, vals = [], [], [], [], []
    freq = 60.0
    with open(path) as handle:
        for line in handle:
            parts = line.split()
            if not parts or parts[0] == "title":
                continue
            if parts[0] == "frequency":
                freq = float(parts[1])
                continue
            names.append(parts[0][:-1])
            kinds.append(parts[1])
            ps.append(parts[2])
            ns.append(parts[4])
            vals.append(float(parts[5]) * SCALE[parts[6]])
    node_names = sorted(set(ps) | set(ns) - {"0"})
    index = {name: k for k, name in enumerate(node_names)}
    index["0"] = -1
    p = np.array([index[x] for x in ps])
    n = np.array([index[x] for x in ns])
    kinds = np.array(kinds)
    vals = np.array(vals, dtype=complex)
    w = 2 * math.pi * freq
    y = np.zeros(len(vals), dtype=complex)
    y[kinds == "resistor"] = 1 / vals[kinds == "resistor"]
    y[kinds == "inductor"] = 1 / (1j * w * vals[kinds == "inductor"])
    y[kinds == "capacitor"] = 1j * w * vals[kinds == "capacitor"]
    src = np.flatnonzero(kinds == "voltage")
    size = len(node_names) + len(src)
    passive = kinds != "voltage"
    pp, nn, yy = p[passive], n[passive], y[passive]
    rows = np.concatenate([pp, nn, pp, nn])
    cols = np.concatenate([pp, nn, nn, pp])
    data = np.concatenate([yy, yy, -yy, -yy])
    b = np.zeros(size, dtype=complex)
    for k, e in enumerate(src):
        col = len(node_names) + k
        rows = np.concatenate([rows, [p[e], col]])
        cols = np.concatenate([cols, [col, p[e]]])
        data = np.concatenate([data, [1.0, 1.0]])
        b[col] = vals[e]
    keep = (rows >= 0) & (cols >= 0)
    A = sp.csc_matrix((data[keep], (rows[keep], cols[keep])), shape=(size, size))
    x = splu(A).solve(b)
    v = np.append(x[:len(node_names)], 0)
    ve = v[p] - v[n]
    ie = y * ve
    for k, e in enumerate(src):
        ie[e] = x[len(node_names) + k]
    s = ve * np.conj(ie)
    vd, idl = phasors(ve), phasors(ie)
    pw, qv, sv = s.real.tolist(), s.imag.tolist(), np.abs(s).tolist()
    elements = {}
    for k, name in enumerate(names):
        elements[name] = {"kind": str(kinds[k]), "from": ps[k], "to": ns[k],
                          "voltage": vd[k], "current": idl[k], "impedance": None,
                          "p_w": pw[k], "q_var": qv[k], "s_va": sv[k],
                          "pf": abs(pw[k]) / sv[k] if sv[k] else 1.0, "pf_sense": "unity"}
    nodes = dict(zip(node_names, phasors(x[:len(node_names)])))
    total = s.sum()
    out = {"title": None, "frequency_hz": freq, "amplitudes": "rms", "nodes": nodes,
           "elements": elements, "balance": {"p_w": total.real, "q_var": total.imag},
           "warnings": []}
    sys.stdout.write(json.dumps(out) + "\n")


if __name__ == "__main__":
    main(sys.argv[1])
