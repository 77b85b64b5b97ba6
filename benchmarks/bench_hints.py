"""How long the did-you-mean hints of a bad circuit take, against a plain parse.

Run by hand:  PYTHONPATH=server python benchmarks/bench_hints.py [LINES]

Each case is a circuit full of misses (named values that use undefined names, controlled
sources that sense missing elements); the baseline is a valid circuit of the same size
in bytes, read in the same run. A ratio near 1 means the hints cost about what reading
costs; the quadratic search this replaced was above 1,000.
"""

from __future__ import annotations

import sys
import time

from phasorbench.workflow import check_text


def undefined_values(n: int) -> str:
    lines = ["frequency 50 Hz", "V1: voltage a -> 0 1 V", "R1: resistor a -> 0 1 ohm"]
    lines += [f"value{i} = missing{i} * 2" for i in range(n)]
    return "\n".join(lines) + "\n"


def missing_senses(n: int) -> str:
    lines = ["frequency 50 Hz", "V1: voltage a -> 0 1 V"]
    lines += [f"F{i}: cccs n{i} -> 0 2 sense Rq{i}" for i in range(n)]
    lines += [f"R{i}: resistor n{i} -> 0 1 ohm" for i in range(n)]
    return "\n".join(lines) + "\n"


def valid_of_size(size: int) -> str:
    lines = ["frequency 50 Hz", "V1: voltage a -> 0 1 V"]
    i = 0
    while sum(len(l) + 1 for l in lines) < size:
        lines.append(f"R{i}: resistor a -> 0 {i + 1} ohm")
        i += 1
    return "\n".join(lines) + "\n"


def cpu(text: str) -> tuple[float, int]:
    start = time.process_time()
    diagnostics = check_text(text)
    return time.process_time() - start, len(diagnostics)


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 4000
    cpu(valid_of_size(2000))                        # imports and first-call costs
    for name, text in (("undefined named values", undefined_values(n)),
                       ("sensed elements missing", missing_senses(n * 3 // 4))):
        base, _ = cpu(valid_of_size(len(text)))
        took, count = cpu(text)
        print(f"{name:26} {len(text) / 1000:7.1f} KB  check {took:7.3f} s CPU  "
              f"plain parse {base:6.3f} s  ratio {took / max(base, 1e-6):7.1f}x  "
              f"({count} diagnostics)")


if __name__ == "__main__":
    main()
