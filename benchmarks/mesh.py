"""Generate an R/L/C mesh circuit: N×N nodes, every edge and every node's shunt an element.

    python benchmarks/mesh.py 100 > /tmp/mesh100.circuit

A 100×100 mesh has 10,000 nodes and 29,800 elements plus one source.
"""

from __future__ import annotations

import sys

KINDS = (("resistor", "ohm", (0.5, 2.0)), ("inductor", "mH", (1.0, 5.0)),
         ("capacitor", "uF", (10.0, 50.0)))


def mesh_circuit(n: int) -> str:
    lines = [f"title {n}x{n} benchmark mesh", "frequency 60 Hz",
             "Vsrc: voltage n0_0 -> 0 480 V"]
    count = 0

    def value(k: int) -> tuple[str, str]:
        kind, unit, (lo, hi) = KINDS[k % 3]
        return kind, f"{lo + (hi - lo) * ((k * 7919) % 1000) / 1000:.4f} {unit}"

    for i in range(n):
        for j in range(n):
            here = f"n{i}_{j}"
            for di, dj in ((0, 1), (1, 0)):
                if i + di < n and j + dj < n:
                    kind, v = value(count)
                    lines.append(f"E{count}: {kind} {here} -> n{i + di}_{j + dj} {v}")
                    count += 1
            kind, v = value(count)
            if kind == "capacitor":
                lines.append(f"S{count}: capacitor {here} -> 0 {v}")
            else:
                lines.append(f"S{count}: resistor {here} -> 0 {50 + count % 17} ohm")
            count += 1
    return "\n".join(lines) + "\n"


if __name__ == "__main__":
    sys.stdout.write(mesh_circuit(int(sys.argv[1]) if len(sys.argv) > 1 else 100))
