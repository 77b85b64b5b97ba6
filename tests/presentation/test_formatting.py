"""Tests of the one number formatter (formatting.py)."""

import cmath
import math
from decimal import Decimal

import pytest
from hypothesis import given
from hypothesis import strategies as st

from phasorbench.presentation import formatting as fmt
from phasorbench.workflow import solve_text

# SI prefixes f … T and their powers of ten: BIPM, SI Brochure (9th ed., 2019),
# table of SI prefixes (from memory); the micro sign is U+00B5 as the brief asks.
PREFIX_POWERS = {"f": -15, "p": -12, "n": -9, "µ": -6, "m": -3, "": 0, "k": 3, "M": 6,
                 "G": 9, "T": 12}


def _read_back(text: str, unit: str) -> float:
    """Turn ``'1.265 kV'`` back into 1265 (the inverse of eng, for the property test)."""
    number, _, rest = text.partition(" ")
    assert rest.endswith(unit)
    prefix = rest[: len(rest) - len(unit)]
    if "e" in number:
        assert prefix == ""
        return float(number)
    return float(number) * 10.0 ** PREFIX_POWERS[prefix]


@pytest.mark.parametrize("value, unit, expected", [
    (1265.3, "V", "1.265 kV"),      # common practice, no source: engineering notation
    (-0.0033, "A", "-3.3 mA"),
    (0, "W", "0 W"),
    (0.0, "", "0"),
    (2.2e-3, "H", "2.2 mH"),
    (150e-6, "F", "150 µF"),
    (33e-9, "F", "33 nF"),
    (4.7e3, "Ω", "4.7 kΩ"),
    (1.0, "VA", "1 VA"),
    (999.96, "W", "1 kW"),          # rounding carries into the next prefix
    (999.94, "W", "999.9 W"),
    (1.5e15, "W", "1.5e15 W"),      # beyond T: e-notation
    (2e-20, "A", "2e-20 A"),        # below f: e-notation
    (12e3, "", "12k"),              # no unit: prefix glued, as the circuit language reads it
])
def test_eng_examples(value, unit, expected):
    assert fmt.eng(value, unit) == expected


def test_eng_missing_and_floor():
    # common practice, no source: a missing value shows a dash, round-off shows as 0
    assert fmt.eng(None, "V") == "—"
    assert fmt.eng(float("nan"), "V") == "—"
    assert fmt.eng(3e-14, "W", floor=1e-9) == "0 W"
    assert fmt.eng(-3e-14, "W", floor=1e-9) == "0 W"
    assert fmt.eng(3e-14, "W") == "30 fW"  # without a floor nothing is hidden


def test_eng_digits_are_significant():
    # common practice, no source
    assert fmt.eng(math.pi * 1e3, "V", digits=2) == "3.1 kV"
    assert fmt.eng(math.pi * 1e3, "V", digits=6) == "3.14159 kV"
    assert fmt.eng(123.456, "W", digits=3) == "123 W"


@given(st.floats(min_value=1e-14, max_value=1e14) | st.floats(min_value=-1e14, max_value=-1e-14))
def test_eng_reads_back_within_its_digits(value):
    # common practice, no source: 4 significant digits lose at most half a unit in the
    # 4th digit, i.e. a relative 5e-4 of the value.
    text = fmt.eng(value, "V")
    assert math.isclose(_read_back(text, "V"), value, rel_tol=5.0001e-4)
    mantissa = abs(float(text.split(" ")[0]))
    assert 1 <= mantissa < 1000  # engineering notation: one prefix step per 1000


def test_angle_and_degrees():
    # check-values C4: I = 4.6 A ∠-53.1301° (IEEE Std 1459-2010 example values)
    assert fmt.angle(-53.1301) == "∠-53.13°"
    assert fmt.degrees(30, 0) == "30°"
    assert fmt.angle(-0.001) == "∠0.00°"      # no negative zero
    assert fmt.angle(-180.0) == "∠180.00°"    # contract range (-180, 180]
    assert fmt.angle(270.0) == "∠-90.00°"
    assert fmt.angle(None) == "∠—"


def test_phasor_polar_text():
    # check-values C4: 230 V across 30 + j40 Ω gives I = 4.6 A ∠-53.1301°
    current = 230 / (30 + 40j)
    assert fmt.phasor(current, "A") == "4.6 A ∠-53.13°"
    assert fmt.phasor({"re": current.real, "im": current.imag, "mag": abs(current),
                       "deg": math.degrees(cmath.phase(current))}, "A") == "4.6 A ∠-53.13°"
    assert fmt.phasor(30 + 40j, "Ω") == "50 Ω ∠53.13°"
    assert fmt.phasor(0j, "V") == "0 V"   # no angle for nothing
    assert fmt.phasor(None, "V") == "—"


def test_rect_text():
    # check-values C1: Xc = 1/(2π·50·10 µF) = 318.31 Ω, a capacitor's Z = −jXc
    zc = 1 / (1j * 2 * math.pi * 50 * 10e-6)
    assert fmt.rect(zc, "Ω") == "0 − j318.3 Ω"
    # common practice, no source: one prefix for both parts, the minus sign U+2212
    assert fmt.rect(0.15 + 0.4j, "Ω") == "0.15 + j0.4 Ω"
    assert fmt.rect(8.2 - 5.1j, "Ω") == "8.2 − j5.1 Ω"
    # check-values C33: Z_in = n²·Z_L = 800 + j600 Ω for 10:1 and 8 + j6 Ω
    assert fmt.rect(100 * (8 + 6j), "Ω") == "800 + j600 Ω"
    assert fmt.rect(1200 + 340j, "Ω") == "1.2 + j0.34 kΩ"
    assert fmt.rect(10 + 1e-17j, "Ω") == "10 + j0 Ω"  # round-off rounds away
    assert fmt.rect(None, "Ω") == "—"


def test_power_factor_text():
    # check-values C4: PF = 0.6 lagging; C14 target 0.95; a resistor is unity
    assert fmt.power_factor(0.6, "lagging") == "0.6 lagging"
    assert fmt.power_factor(0.95, "leading") == "0.95 leading"
    assert fmt.power_factor(1.0, "unity") == "1 unity"
    assert fmt.power_factor(math.cos(math.radians(30)), "lagging") == "0.866 lagging"
    assert fmt.power_factor(None, None) == "—"


RL_AND_C = """frequency 50 Hz
Vs: voltage a -> 0 230 V
Zl: impedance a -> 0 30 + j40 ohm
C1: capacitor a -> 0 10 uF
"""


def _by_name(rows):
    return {row["name"]: row for row in rows}


def test_element_rows_show_the_check_values():
    rows = _by_name(fmt.element_rows(solve_text(RL_AND_C)))
    keys = [k for k, _ in fmt.ELEMENT_COLUMNS]
    assert all(sorted(row["text"]) == sorted(keys) for row in rows.values())
    zl = rows["Zl"]["text"]
    # check-values C4: I = 4.6 A∠-53.13°, P = 634.8 W, Q = 846.4 var, S = 1058 VA, PF 0.6 lag
    assert zl["current"] == "4.6 A ∠-53.13°"
    assert (zl["p"], zl["q"], zl["s"], zl["pf"]) == ("634.8 W", "846.4 var", "1.058 kVA",
                                                     "0.6 lagging")
    assert zl["impedance_rect"] == "30 + j40 Ω" and zl["impedance_polar"] == "50 Ω ∠53.13°"
    assert zl["terminals"] == "a → 0" and zl["kind"] == "impedance"
    c1 = rows["C1"]["text"]
    # check-values C1: I = 0.722566 A leading by 90°, Q = -166.19 var, P = 0
    assert c1["current"] == "722.6 mA ∠90.00°"
    assert c1["q"] == "-166.2 var" and c1["p"] == "0 W"
    assert c1["pf"] == "0 leading"
    assert rows["Vs"]["text"]["impedance_rect"] == "—"  # sources have no impedance


def test_element_rows_keep_the_raw_numbers():
    result = solve_text(RL_AND_C)
    for row in fmt.element_rows(result):
        el = result["elements"][row["name"]]
        # common practice, no source: sorting numbers are the contract's, untouched —
        # for a source the delivered ones it shows (the negatives of the passive sign)
        sign = -1.0 if "delivered" in el else 1.0
        assert row["values"]["p_w"] == sign * el["p_w"] and row["values"]["s_va"] == el["s_va"]
        assert math.isclose(row["values"]["i_mag"], el["current"]["mag"], rel_tol=1e-12)
        assert row["values"]["v_deg"] == el["voltage"]["deg"]
        assert row["secondary"] is None
        assert bool(row["sub"]) == (el["kind"] == "voltage")


def test_round_off_power_prints_as_zero():
    # common practice, no source: 1e-14 W beside 166 var is round-off of the solve
    v, i = 230 + 0j, 0.722566j + 3e-17
    s = v * i.conjugate()
    result = {"frequency_hz": 50.0, "amplitudes": "rms", "nodes": {},
              "elements": {"C1": {"kind": "capacitor", "from": "a", "to": "0",
                                  "voltage": {"re": 230.0, "im": 0.0, "mag": 230.0, "deg": 0.0},
                                  "current": {"re": i.real, "im": i.imag, "mag": abs(i),
                                              "deg": 90.0},
                                  "impedance": None, "p_w": s.real, "q_var": s.imag,
                                  "s_va": abs(s), "pf": abs(s.real) / abs(s),
                                  "pf_sense": "leading"}}}
    assert s.real != 0
    text = fmt.element_rows(result)[0]["text"]
    assert text["p"] == "0 W"
    assert text["pf"] == "0 leading"


def test_transformer_row_has_its_secondary():
    result = solve_text("""frequency 50 Hz
Vs: voltage a -> 0 240 V
T1: transformer a -> 0, b -> 0 ratio 10:1
ZL: impedance b -> 0 8 + j6 ohm
""")
    row = _by_name(fmt.element_rows(result))["T1"]
    # check-values C33: V2 = 24 V, |I2| = 2.4 A, |I1| = 0.24 A
    assert row["secondary"]["voltage"] == "24 V ∠0.00°"
    assert row["secondary"]["current"].startswith("2.4 A ∠")
    assert row["text"]["current"] == "240 mA ∠-36.87°"


def test_node_rows():
    rows = _by_name(fmt.node_rows(solve_text(RL_AND_C)))
    # common practice, no source: ground is 0 V, the driven node the source's 230 V
    assert rows["0"]["text"]["voltage"] == "0 V"
    assert rows["a"]["text"]["voltage"] == "230 V ∠0.00°"
    assert rows["a"]["text"]["rect"] == "230 + j0 V"
    assert rows["a"]["values"]["v_mag"] == 230.0
    assert sorted(rows["a"]["text"]) == sorted(k for k, _ in fmt.NODE_COLUMNS)


def test_extreme_finite_values_format_without_error():
    # IEEE 754 binary64: the largest finite double and subnormals are ordinary values;
    # their text keeps the value's own digits (the decimal strings are Python's repr)
    assert fmt.eng(1.7976931348623157e308, "Ω") == "1.798e308 Ω"
    assert fmt.eng(2.22507e-313, "S") == "2.225e-313 S"
    assert fmt.eng(5e-324, "V") == "4.941e-324 V"
    assert fmt.eng(-1.7976931348623157e308, "W") == "-1.798e308 W"


# ---- the ends of the float range (issue 9, item 5) --------------------------------

@pytest.mark.parametrize("value, expected", [
    # IEEE 754-2019, section 3.3, binary64: largest finite 1.7976931348623157e308, smallest
    # subnormal 4.9406564584124654e-324; 4 significant digits of each (from memory)
    (1.7976931348623157e308, "1.798e308 V"),
    (-1.7976931348623157e308, "-1.798e308 V"),
    (5e-324, "4.941e-324 V"),
    (1e-323, "9.881e-324 V"),
    (2.2250738585072014e-308, "2.225e-308 V"),         # smallest normal
])
def test_eng_at_the_ends_of_the_float_range(value, expected):
    assert fmt.eng(value, "V") == expected


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_every_finite_float_formats(value):
    # IEEE 754-2019 binary64: every finite value, subnormals included, reads back within
    # the shown digits (common practice, no source); no exception anywhere in the range
    for text in (fmt.eng(value, "V"), fmt.plain(value), fmt.rect(complex(value, -value / 3), "Ω"),
                 fmt.phasor({"re": value, "im": value, "mag": abs(value), "deg": 45.0}, "A")):
        assert text and "inf" not in text and "nan" not in text
    if value != 0:      # read back in decimal: "1.798e308" is past the largest float
        number, _, rest = fmt.eng(value, "V").partition(" ")
        back = Decimal(number) * Decimal(10) ** PREFIX_POWERS.get(rest[:-1], 0)
        assert abs(back - Decimal(value)) <= Decimal("5.0001e-4") * abs(Decimal(value))


@pytest.mark.parametrize("n, text", [(1, "1st"), (2, "2nd"), (3, "3rd"), (4, "4th"),
                                     (5, "5th"), (11, "11th"), (12, "12th"), (13, "13th"),
                                     (21, "21st"), (22, "22nd"), (23, "23rd"), (101, "101st"),
                                     (111, "111th"), (113, "113th")])
def test_ordinals_read_as_english(n, text):
    # common practice, no source: English ordinal suffixes (the teens take "th")
    assert fmt.ordinal(n) == text
