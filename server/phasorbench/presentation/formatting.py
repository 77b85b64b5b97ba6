"""Numbers, phasors and angles as text: the one formatter of the product.

The terminal table, the JSON API (and so the page) and the exported sheet all show
numbers through this module, so a value reads the same everywhere. Table rows are
built here too (`element_rows`, `node_rows`): each row carries the raw numbers, for
sorting, and the display strings, for showing.

>>> eng(1265.3, "V")
'1.265 kV'
>>> phasor({"re": 1.2, "im": -0.4, "mag": 1.2649, "deg": -18.435}, "V")
'1.265 V ∠-18.43°'
>>> rect(8.2 - 5.1j, "Ω")
'8.2 − j5.1 Ω'
"""

from __future__ import annotations

import cmath
import math

__all__ = [
    "ordinal",
    "ELEMENT_COLUMNS",
    "LIMITED",
    "SHOWN_DIGITS",
    "NODE_COLUMNS",
    "MISSING",
    "NO_POWER",
    "ROUND_OFF",
    "angle",
    "decibels",
    "degrees",
    "element_rows",
    "shown_digits",
    "eng",
    "node_rows",
    "phasor",
    "plain",
    "power_factor",
    "power_factor_of",
    "rect",
]

#: Shown for a value that does not exist (None, NaN).
MISSING = "—"
#: The power factor of an element that takes no power: there is no angle to quote.
NO_POWER = "— no power"

#: Values smaller than this fraction of the largest value of their kind in a circuit
#: are round-off of the solve (double precision leaves ~1e-16 relative error, times
#: the condition of the matrix), so the tables show them as 0.
ROUND_OFF = 1e-12

_PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}

#: Columns of the branch table, in order: (key in ``row["text"]``, heading).
ELEMENT_COLUMNS = (
    ("name", "Element"),
    ("kind", "Kind"),
    ("terminals", "From → to"),
    ("voltage", "|V| ∠"),
    ("current", "|I| ∠"),
    ("impedance_rect", "Z"),
    ("impedance_polar", "|Z| ∠"),
    ("p", "P"),
    ("q", "Q"),
    ("s", "|S|"),
    ("pf", "PF"),
)

#: Columns of the node table, in order: (key in ``row["text"]``, heading).
NODE_COLUMNS = (("name", "Node"), ("voltage", "|V| ∠"), ("rect", "V (re + j im)"))


def _is_missing(value) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def _trim(text: str) -> str:
    """Drop trailing zeros of a decimal ("1.2500" -> "1.25", "2.000" -> "2")."""
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _decimals_for(mantissa: float, digits: int) -> int:
    """Decimal places that give ``digits`` significant digits for |mantissa| in [1, 1000)."""
    whole = len(str(int(abs(mantissa)))) if abs(mantissa) >= 1 else 1
    return max(digits - whole, 0)


def _split(value: float, digits: int) -> tuple[float, int]:
    """Round to ``digits`` significant digits and split into (mantissa, exponent of 1000)."""
    # read from the decimal text: rounding 1.7976931348623157e308 to 4 digits overflows
    # a float, and a subnormal's power of ten underflows to 0
    mantissa, exponent = f"{value:.{digits - 1}e}".split("e")
    exponent = int(exponent)
    exp3 = 3 * math.floor(exponent / 3)
    return float(mantissa) * 10 ** (exponent - exp3), exp3


def eng(value, unit: str = "", digits: int = 4, floor: float | None = None) -> str:
    """Engineering notation with an SI prefix and ``digits`` significant digits.

    Parameters
    ----------
    value : float or None
        The number; None and NaN give ``"—"``.
    unit : str
        Unit symbol appended after a space (``"V"``, ``"var"``, ``"Ω"``).
    digits : int
        Significant digits; trailing zeros are trimmed.
    floor : float, optional
        Magnitudes below ``floor`` print as 0 (round-off of a solve).

    Examples
    --------
    >>> eng(1265.3, "V"), eng(-0.0033, "A"), eng(0, "W"), eng(2.5e-14, "W", floor=1e-9)
    ('1.265 kV', '-3.3 mA', '0 W', '0 W')
    """
    if _is_missing(value):
        return MISSING
    value = float(value)
    space = " " if unit else ""
    if math.isinf(value):
        return ("-∞" if value < 0 else "∞") + space + unit
    if value == 0 or (floor is not None and abs(value) < floor):
        return "0" + space + unit
    mantissa, exp3 = _split(value, digits)
    if exp3 not in _PREFIXES:
        # Beyond f..T an SI prefix would be unfamiliar: plain e-notation instead.
        mant, _, exp = f"{value:.{digits - 1}e}".partition("e")
        return f"{_trim(mant)}e{int(exp)}" + space + unit
    text = _trim(f"{mantissa:.{_decimals_for(mantissa, digits)}f}")
    prefix = _PREFIXES[exp3]
    if unit:
        return f"{text} {prefix}{unit}"
    return text + prefix


def plain(value, digits: int = 4) -> str:
    """A number without prefix or unit, ``digits`` significant digits, zeros trimmed.

    Used for axis ticks whose unit is stated once in the axis title (``t (ms)``).

    >>> plain(12.5), plain(0.02), plain(1.0)
    ('12.5', '0.02', '1')
    """
    if _is_missing(value):
        return MISSING
    value = float(value)
    if value == 0:
        return "0"
    if math.isinf(value):
        return "-∞" if value < 0 else "∞"
    if not 1e-4 <= abs(value) < 1e7:
        mant, _, exp = f"{value:.{digits - 1}e}".partition("e")
        return f"{_trim(mant)}e{int(exp)}"
    decimals = max(digits - 1 - math.floor(math.log10(abs(float(f"{value:.{digits - 1}e}")))), 0)
    return _trim(f"{value:.{decimals}f}")


def ordinal(n: int) -> str:
    """``1st``, ``2nd``, ``3rd``, ``4th`` … ``11th``, ``12th``, ``13th``, ``21st``."""
    n = int(n)
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"{n}{suffix}"


def _normal_deg(deg: float) -> float:
    """Angle in (-180, 180], as the contract gives it."""
    deg = math.fmod(float(deg), 360.0)
    if deg <= -180.0:
        deg += 360.0
    elif deg > 180.0:
        deg -= 360.0
    return deg


def degrees(deg, digits: int = 2) -> str:
    """An angle in degrees with ``digits`` decimals, normalised to (-180, 180].

    >>> degrees(-18.4349), degrees(30, 0), degrees(-180)
    ('-18.43°', '30°', '180.00°')
    """
    if _is_missing(deg):
        return MISSING
    deg = _normal_deg(deg)
    text = f"{deg:.{digits}f}"
    if float(text) == 0:
        text = f"{0.0:.{digits}f}"  # no "-0.00°"
    elif float(text) == -180:
        text = f"{180.0:.{digits}f}"  # rounding may land on -180; the contract excludes it
    return text + "°"


def decibels(magnitude, digits: int = 2) -> str:
    """A magnitude ratio in decibels, ``20·log10(magnitude)``, ``digits`` decimals.

    >>> decibels(0.7071067811865476), decibels(10), decibels(0)
    ('-3.01 dB', '20.00 dB', '-∞ dB')
    """
    if _is_missing(magnitude):
        return MISSING
    magnitude = abs(float(magnitude))
    if magnitude == 0:
        return "-∞ dB"
    text = f"{20 * math.log10(magnitude):.{digits}f}"
    if float(text) == 0:
        text = f"{0.0:.{digits}f}"
    return text + " dB"


def angle(deg, digits: int = 2) -> str:
    """An angle with the phasor sign: ``angle(-18.4349) == '∠-18.43°'``."""
    return "∠" + degrees(deg, digits)


def _as_complex(ph) -> complex | None:
    if ph is None:
        return None
    if isinstance(ph, dict):
        if _is_missing(ph.get("re")) or _is_missing(ph.get("im")):
            return None
        return complex(ph["re"], ph["im"])
    return complex(ph)


def phasor(ph, unit: str = "", digits: int = 4, floor: float | None = None,
           angle_digits: int = 2) -> str:
    """Polar form ``|X| unit ∠θ``; ``ph`` is a contract phasor dict or a complex;
    ``angle_digits`` decimals of the angle.

    A magnitude shown as 0 (exactly 0, or below ``floor``) has no angle worth showing.

    >>> phasor(3 + 4j, "A")
    '5 A ∠53.13°'
    """
    if isinstance(ph, dict) and not _is_missing(ph.get("mag")) and not _is_missing(ph.get("deg")):
        mag, deg = float(ph["mag"]), float(ph["deg"])
    else:
        z = _as_complex(ph)
        if z is None:
            return MISSING
        mag, deg = abs(z), math.degrees(cmath.phase(z))
    text = eng(mag, unit, digits, floor)
    if mag == 0 or (floor is not None and mag < floor):
        return text
    return f"{text} {angle(deg, angle_digits)}"


def rect(ph, unit: str = "", digits: int = 4, floor: float | None = None) -> str:
    """Rectangular form ``a + jb unit`` with one prefix for both parts.

    The prefix and the significant digits follow the larger part, as engineers write
    ``1.2 + j0.34 kΩ``; a part that rounds away shows as 0.

    >>> rect(0.15 + 0.4j, "Ω"), rect(8.2 - 5.1j, "Ω"), rect(1200 + 340j, "Ω")
    ('0.15 + j0.4 Ω', '8.2 − j5.1 Ω', '1.2 + j0.34 kΩ')
    """
    z = _as_complex(ph)
    if z is None:
        return MISSING
    re, im = z.real, z.imag
    if floor is not None:
        re = 0.0 if abs(re) < floor else re
        im = 0.0 if abs(im) < floor else im
    big = max(abs(re), abs(im))
    space = " " if unit else ""
    if big == 0:
        return f"0 + j0{space}{unit}"
    mantissa, exp3 = _split(big, digits)
    if exp3 == -3 and mantissa >= 10:
        # 0.01 to 1: "0.15 + j0.4 Ω" reads better than "150 + j400 mΩ".
        mantissa, exp3 = mantissa / 1000.0, 0
    if exp3 not in _PREFIXES:
        exp3 = 0  # out of prefix range: both parts in e-notation
        a, b, prefix = plain(re, digits), plain(abs(im), digits), ""
    else:
        if mantissa >= 1:
            decimals = _decimals_for(mantissa, digits)
        else:
            decimals = digits - 1 - math.floor(math.log10(mantissa))
        scale = 10.0**exp3
        a = _trim(f"{re / scale:.{decimals}f}")
        b = _trim(f"{abs(im) / scale:.{decimals}f}")
        prefix = _PREFIXES[exp3]
    sign = "−" if im < 0 and b != "0" else "+"
    suffix = f" {prefix}{unit}" if unit else prefix
    return f"{a} {sign} j{b}{suffix}"


def power_factor(pf, sense: str | None = None, digits: int = 4) -> str:
    """Power factor with its sense: ``'0.8 lagging'``, ``'1 unity'``.

    ``digits`` is the number of decimals before trimming zeros.
    """
    if _is_missing(pf):
        return MISSING
    text = _trim(f"{float(pf):.{digits}f}")
    return f"{text} {sense}" if sense else text


def power_factor_of(pf, sense, s_va, floor: float = 0.0, digits: int = 4) -> str:
    """`power_factor`, or `NO_POWER` where ``s_va`` is zero or below ``floor`` (round-off):
    the contract's ``pf`` of 1.0 there is a convention, and "1 unity" would read as a
    measured unity power factor."""
    if not _is_missing(s_va) and (float(s_va) == 0.0 or abs(float(s_va)) < floor):
        return NO_POWER
    return power_factor(pf, sense, digits)


def _floor(values, fraction: float = ROUND_OFF) -> float:
    """A round-off floor: ``fraction`` of the largest finite magnitude (0 if none)."""
    finite = [abs(v) for v in values if not _is_missing(v) and math.isfinite(v)]
    return fraction * max(finite, default=0.0)


def _mag(ph) -> float | None:
    z = _as_complex(ph)
    return None if z is None else abs(z)


def _phasor_values(ph, prefix: str) -> dict:
    """Raw numbers of a phasor for sorting: ``{prefix_mag, prefix_deg, prefix_re, prefix_im}``."""
    z = _as_complex(ph)
    if z is None:
        return {f"{prefix}_{k}": None for k in ("mag", "deg", "re", "im")}
    deg = ph["deg"] if isinstance(ph, dict) and "deg" in ph else math.degrees(cmath.phase(z))
    return {f"{prefix}_mag": abs(z), f"{prefix}_deg": deg,
            f"{prefix}_re": z.real, f"{prefix}_im": z.imag}


#: Significant digits shown in the tables when the solve trusts at least that many.
SHOWN_DIGITS = 4
#: Put before a value shown with fewer digits than usual because only those are trusted.
LIMITED = "≈"


def shown_digits(trusted) -> int:
    """Digits to show for a value whose solve trusts ``trusted`` significant digits:
    never more than the check allows, never fewer than one."""
    if _is_missing(trusted):
        return SHOWN_DIGITS
    return max(1, min(SHOWN_DIGITS, int(trusted)))


def _angle_decimals(digits: int) -> int:
    """Decimals of an angle whose phasor is right to ``digits`` significant digits: a
    relative error of 10⁻ᵈ moves the angle by up to about 57·10⁻ᵈ degrees."""
    return max(0, min(2, digits - 2))


def _limited(text: str, digits: int) -> str:
    return text if digits >= SHOWN_DIGITS or text == MISSING else LIMITED + text


#: The second line under a supply's cells: its current and power are the delivered ones.
DELIVERED_SUB = {"current": "delivered", "p": "delivered", "q": "delivered"}


def element_rows(result: dict, names=None) -> list[dict]:
    """One row per element of a contract dict, in the circuit's order (or, given
    ``names``, of those elements in that order: a window of a big table).

    Each row is ``{"name", "kind", "from", "to", "values": {...}, "text": {...},
    "secondary": None or {"voltage", "current"}}``. ``values`` holds the raw numbers
    (``v_mag``, ``v_deg``, ``v_re``, ``v_im``, the same for ``i_`` and ``z_``, ``p_w``,
    ``q_var``, ``s_va``, ``pf``; None where absent) for sorting; ``text`` holds
    the display string of every column of `ELEMENT_COLUMNS`. Powers below 1e-12 of the
    circuit's largest |S| show as 0, likewise voltages and currents. A source
    (independent or controlled) shows the current it delivers (out of its ``from``
    terminal into the circuit) and the power it delivers as positive, from its
    ``delivered`` field, in ``text`` and ``values`` alike; its ``sub`` holds the
    ``DELIVERED_SUB`` labels (other rows: ``{}``). An element whose
    solve trusts fewer than `SHOWN_DIGITS` significant digits (its ``digits`` field) shows
    only those, marked with `LIMITED`; ``values["digits"]`` holds the count.
    """
    elements = result.get("elements", {})
    s_floor = _floor([e.get("s_va") for e in elements.values()])
    v_floor = _floor([_mag(e.get("voltage")) for e in elements.values()]
                     + [_mag(n) for n in result.get("nodes", {}).values()])
    i_floor = _floor([_mag(e.get("current")) for e in elements.values()])
    rows = []
    chosen = elements.items() if names is None else ((n, elements[n]) for n in names)
    for name, el in chosen:
        # a supply's current and power are the ones it delivers (its `delivered` field)
        supply = el.get("delivered") if isinstance(el.get("delivered"), dict) else None
        seen = {**el, **supply} if supply else el
        values = {}
        for key, prefix in (("voltage", "v"), ("current", "i"), ("impedance", "z")):
            values.update(_phasor_values(seen.get(key), prefix))
        for key in ("p_w", "q_var", "s_va", "pf"):
            values[key] = seen.get(key)
        d = shown_digits(el.get("digits"))
        values["digits"] = el.get("digits")

        def cut(text: str) -> str:
            return _limited(text, d)

        text = {
            "name": name,
            "kind": el.get("kind", ""),
            "terminals": f"{el.get('from', '?')} → {el.get('to', '?')}",
            "voltage": cut(phasor(el.get("voltage"), "V", d, v_floor, _angle_decimals(d))),
            "current": cut(phasor(seen.get("current"), "A", d, i_floor, _angle_decimals(d))),
            "impedance_rect": rect(el.get("impedance"), "Ω"),
            "impedance_polar": phasor(el.get("impedance"), "Ω"),
            "p": cut(eng(seen.get("p_w"), "W", d, floor=s_floor)),
            "q": cut(eng(seen.get("q_var"), "var", d, floor=s_floor)),
            "s": cut(eng(el.get("s_va"), "VA", d, floor=s_floor)),
            "pf": cut(_pf_text(el, s_floor, d)),
        }
        secondary = None
        if isinstance(el.get("secondary"), dict):
            sec = el["secondary"]
            secondary = {"voltage": cut(phasor(sec.get("voltage"), "V", d, v_floor, _angle_decimals(d))),
                         "current": cut(phasor(sec.get("current"), "A", d, i_floor, _angle_decimals(d)))}
        rows.append({"name": name, "kind": el.get("kind"), "from": el.get("from"),
                     "to": el.get("to"), "values": values, "text": text, "secondary": secondary,
                     "sub": dict(DELIVERED_SUB) if supply else {}})
    return rows


def _pf_text(el: dict, s_floor: float, digits: int = SHOWN_DIGITS) -> str:
    """PF with round-off removed: no power at all reads as the contract's zero case."""
    s, p, q = el.get("s_va"), el.get("p_w"), el.get("q_var")
    if _is_missing(s) or _is_missing(p):
        return power_factor(el.get("pf"), el.get("pf_sense"), digits)
    if abs(s) < s_floor or s == 0:
        return NO_POWER  # the contract's pf 1.0 for |S| = 0 is a convention, not a reading
    pf = 0.0 if abs(p) < s_floor else el.get("pf", abs(p) / s)
    sense = "unity" if (not _is_missing(q) and abs(q) < s_floor) else el.get("pf_sense")
    return power_factor(pf, sense, digits)


def node_rows(result: dict, names=None) -> list[dict]:
    """One row per node (or per node of ``names``, in that order): ``{"name", "values":
    {v_mag, v_deg, v_re, v_im}, "text": {...}}``.

    ``text`` holds every column of `NODE_COLUMNS`; voltages below 1e-12 of the largest
    node voltage show as 0.
    """
    nodes = result.get("nodes", {})
    trusted = result.get("node_digits") or {}
    v_floor = _floor([_mag(n) for n in nodes.values()])
    rows = []
    chosen = nodes.items() if names is None else ((n, nodes[n]) for n in names)
    for name, ph in chosen:
        d = shown_digits(trusted.get(name))
        rows.append({"name": name, "values": _phasor_values(ph, "v"),
                     "text": {"name": name,
                              "voltage": _limited(phasor(ph, "V", d, v_floor,
                                                         _angle_decimals(d)), d),
                              "rect": _limited(rect(ph, "V", d, floor=v_floor), d)}})
    return rows
