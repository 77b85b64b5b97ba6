"""The element limit counts what the parser counts (issue 9, item 3)."""

from __future__ import annotations

import pytest

from phasorbench.language.parser import count_elements, parse_circuit
from phasorbench.web.limits import check_size
from phasorbench.errors import CircuitError

HEAD = "frequency 50 Hz\nV1: voltage n0 -> 0 1 V\n"


def chain(n: int, separators=(":", " :", "\t:", ":\t", "  :  ")) -> str:
    lines = [f"R{i}{separators[i % len(separators)]}resistor n{i} -> n{i + 1} 1 ohm"
             for i in range(n)]
    return HEAD + "\n".join(lines) + f"\nRend: resistor n{n} -> 0 1 ohm\n"


@pytest.mark.parametrize("n", [1, 7, 40])
def test_count_equals_the_elements_the_parser_reads(n):
    # common practice, no source: the limit's count and the parser's own element table
    # must agree for every spacing of the colon the language accepts
    text = chain(n)
    assert count_elements(text) == len(parse_circuit(text).elements) == n + 2


def test_a_block_counts_three_and_a_badly_named_element_one():
    # common practice, no source: a voltage3/load3 block expands to three elements
    # (circuit-language.md), a dropped element line still costs the parser a line
    text = ("frequency 50 Hz\nG1 : voltage3 a b c -> 0 230 V\n"
            "M1:load3 wye a b c -> n 8 + j6 ohm\nR-1: resistor a -> 0 1\n")
    assert count_elements(text) == 3 + 3 + 1


def test_spaced_colons_no_longer_slip_past_the_limit(make_api):
    # common practice, no source: 6,002 elements against a 5,000 limit (the figure
    # was 6,000 passing) must be refused, whatever the spacing before the colon
    text = chain(6000)
    r = make_api(max_elements=5000).post("/api/solve", json={"netlist": text})
    assert r.status_code == 422
    message = r.json()["errors"][0]["message"]
    assert "6,002 elements" in message and "5,000" in message


def test_check_size_lets_a_text_just_at_the_limit_through():
    # common practice, no source: the bound is "more than", so exactly the limit passes
    text = chain(48)                     # 50 elements, 50 colons + 'frequency' has none
    check_size(text, 50)
    with pytest.raises(CircuitError):
        check_size(text, 49)
