"""The formula renderer (presentation/mathforms.py): text, LaTeX and MathML of a tree."""

from __future__ import annotations

import xml.etree.ElementTree as ET

from phasorbench.presentation.mathforms import forms, latex, mathml, math_block, number_text, text

ONE = ["n", "1", "1"]
RC = ["/", ONE, ["+", [["*", [["x", "C1"], ["x", "R1"], ["x", "s"]]], ONE]]]
M = "{http://www.w3.org/1998/Math/MathML}"


def test_text_needs_parentheses_only_where_precedence_asks():
    # common practice, no source: ASCII formulas as typed into a calculator
    assert text(RC) == "1/(C1*R1*s + 1)"
    assert text(["*", [["+", [["x", "a"], ["-", ["x", "b"]]]], ["x", "c"]]]) == "(a - b)*c"
    assert text(["^", ["x", "s"], ["n", "2", "1"]]) == "s^2"
    assert text(["-", ["*", [["n", "2", "1"], ["x", "R"]]]]) == "-2*R"


def test_numbers_are_exact_decimals_or_fractions():
    # common practice, no source: exact values shown without rounding
    assert number_text(["n", "4700", "1"]) == "4700"
    assert number_text(["n", "1", "10000000"]) == "1e-07"
    assert number_text(["n", "47", "20000000000"]) == "2.35e-09"
    assert number_text(["n", "1", "3"]) == "1/3"
    assert number_text(["n", "1", "8"]) == "0.125"


def test_mathml_is_well_formed_presentation_markup():
    block = math_block(mathml(RC))
    root = ET.fromstring(block)          # an XML parser (outside the project) reads it
    assert root.tag == M + "math" and root.get("display") == "block"
    frac = root.find(f"{M}mfrac")
    assert frac is not None              # W3C MathML 3, §3.3.2: <mfrac> numerator denominator
    subs = [el for el in root.iter(M + "msub")]
    # W3C MathML 3, §3.4.1: <msub> base script — R1 is R with index 1
    assert [(s[0].text, s[1].text) for s in subs] == [("C", "1"), ("R", "1")]
    # W3C MathML 3, §3.2.5.5: U+2062 INVISIBLE TIMES between juxtaposed factors
    assert "\u2062" in "".join(root.itertext())


def test_user_names_are_escaped():
    node = ["=", ["probe", "V(a<b)"], ["x", "R&1"]]
    block = forms(node)["mathml"]
    ET.fromstring(block)                 # still well-formed XML (W3C XML 1.0 §2.4)
    assert "&lt;" in block and "&amp;" in block


def test_latex_fractions_and_indices():
    # common practice, no source: LaTeX as written by hand
    assert latex(RC) == "\\frac{1}{C_{1} R_{1} s + 1}"
    assert latex(["x", "Rload"]) == "\\mathrm{Rload}"
    assert latex(["x", "Vin"]) == "V_{\\mathrm{in}}"
    assert latex(["n", "47", "20000000000"]) == "2.35 \\cdot 10^{-9}"
