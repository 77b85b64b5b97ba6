"""The data the sheet's template receives (sheet/context.py), checked without markup."""

from __future__ import annotations

import hashlib
import math
from datetime import datetime, timedelta, timezone

import pytest

from phasorbench import __version__
from phasorbench.presentation.cautions import CAUTIONS, SCOPE_NOTE
from phasorbench.errors import CircuitError, source_lines as reader_lines
from phasorbench.sheet import sheet_context, sheet_filename
from phasorbench.sheet.choice import DEFAULT_WAVEFORMS, MAX_PHASORS
from phasorbench.sheet.context import source_lines

from .conftest import BALANCED_WYE, NOW, RC_BENCH, ladder


def context(text, **kw):
    return sheet_context(text, "<test>", now=NOW, **kw)


def row(ctx, name):
    return next(r for r in ctx["elements"] if r["name"] == name)


# ---- identity of the input ----------------------------------------------------------

@pytest.mark.parametrize("text", [
    RC_BENCH,
    RC_BENCH.replace("\n", "\r\n"),           # Windows line ends
    RC_BENCH.rstrip("\n"),                    # no final line end
    RC_BENCH.replace("\n", "\r"),             # old Mac line ends
    RC_BENCH + "\n\n# trailing comment\f with a form feed\n",
])
def test_listing_is_the_input_verbatim_and_numbered_like_the_reader(text):
    lines = source_lines(text)
    # Joined back, the listing is the input character for character.
    assert "".join(line["text"] for line in lines) == text
    # Numbered as the circuit reader numbers lines (errors.source_lines: LF, CRLF, CR),
    # so a warning's "line 5" points at listing line 5.
    assert [line["number"] for line in lines] == list(range(1, len(reader_lines(text)) + 1))


def test_hash_is_the_sha256_of_the_utf8_text():
    text = RC_BENCH.replace("RC bench", "RC bench ∠ µF Ω")
    # hashlib (FIPS 180-4 SHA-256) over the UTF-8 bytes, as `sha256sum FILE` computes it.
    assert context(text)["sha256"] == hashlib.sha256(text.encode("utf-8")).hexdigest()


def test_header_facts():
    ctx = context(RC_BENCH)
    assert ctx["title"] == "RC bench" and ctx["heading"] == "RC bench"
    assert ctx["version"] == __version__
    assert ctx["counts"] == {"lines": 6, "elements": 3, "nodes": 3, "groups": 0}
    # The moment passed in, as ISO 8601 (RFC 3339 profile) with its zone.
    assert ctx["generated"] == {"iso": "2026-03-14T09:26:53+00:00",
                                "text": "2026-03-14 09:26:53 UTC+00:00"}
    assert context(RC_BENCH.replace("title RC bench\n", ""))["heading"] == "Untitled circuit"


def test_timestamp_defaults_to_now_with_a_zone():
    before = datetime.now(timezone.utc)
    stamp = sheet_context(RC_BENCH)["generated"]["iso"]
    made = datetime.fromisoformat(stamp)
    assert made.tzinfo is not None                      # common practice, no source
    slack = timedelta(seconds=1)
    assert before - slack <= made <= datetime.now(timezone.utc) + slack
    zone = timezone(timedelta(hours=5, minutes=30))
    assert sheet_context(RC_BENCH, now=datetime(2026, 1, 2, 3, 4, 5, tzinfo=zone)
                         )["generated"]["text"] == "2026-01-02 03:04:05 UTC+05:30"


@pytest.mark.parametrize("title, name", [
    ("Bakery feeder with correction capacitor",
     "bakery-feeder-with-correction-capacitor-sheet.html"),
    ("  Pump station: 11 kV / 415 V  ", "pump-station-11-kv-415-v-sheet.html"),
    ("<script>alert(1)</script>", "script-alert-1-script-sheet.html"),
    ("Ωµ∠", "circuit-sheet.html"),
    (None, "circuit-sheet.html"),
])
def test_download_name_is_a_safe_slug_of_the_title(title, name):
    # Only [a-z0-9-]: safe in a Content-Disposition header (RFC 6266, 4.3) and on disk.
    assert sheet_filename(title) == name


# ---- the numbers ----------------------------------------------------------------------

def test_branch_rows_carry_the_formula_values():
    ctx = context(RC_BENCH)
    assert [r["name"] for r in ctx["elements"]] == ["V1", "R1", "C1"]
    # |I| = 230/(318.31·√2) = 0.510932 A leading by 45° (formula above), 4 significant
    # digits in engineering notation (common practice, no source).
    assert row(ctx, "R1")["text"]["current"] == "510.9 mA ∠45.00°"
    # V(C1) = I·(−jXc) = 162.6 V ∠−45°.
    assert row(ctx, "C1")["text"]["voltage"] == "162.6 V ∠-45.00°"
    assert row(ctx, "C1")["text"]["pf"] == "0 leading"
    assert row(ctx, "R1")["line"] == 5                  # the name links to input line 5
    assert [n["name"] for n in ctx["nodes"]] == ["0", "a", "b"]


def test_three_phase_block_against_check_values():
    ctx = context(BALANCED_WYE)
    load = next(g for g in ctx["groups"] if g["row"]["name"] == "Load")
    text, detail = load["row"]["text"], load["detail"]
    # check-values C22 (formula): P = 6400 W, Q = 4800 var, S = 8000 VA, PF 0.8 lagging,
    # I_a = 11.547 A ∠-36.8699°, V_ab = 400 V ∠30°, V_ph = 400/√3 = 230.94 V.
    assert (text["p"], text["q"], text["s"], text["pf"]) == ("6.4 kW", "4.8 kvar", "8 kVA",
                                                             "0.8 lagging")
    assert detail["lines"][0]["current"] == "11.55 A ∠-36.87°"
    assert detail["lines"][0]["voltage"] == "400 V ∠30.00°"
    sequence = {q["name"]: q["voltage"] for q in detail["sequence"]}
    # A balanced set has no zero or negative sequence (Fortescue, 1918).
    assert sequence == {"zero (0)": "0 V", "positive (1)": "230.9 V ∠0.00°",
                        "negative (2)": "0 V"}
    facts = {f["term"]: f["value"] for f in detail["facts"]}
    assert facts["voltage unbalance V₂/V₁"] == "0 %"
    # I_N = 0 for a balanced 4-wire load (check-values C22: computed 4e-15 A).
    # (the words around the value are the page's; the value is what is checked)
    assert facts["neutral current"].endswith(" 0 A") and "∠" not in facts["neutral current"]


def test_couplings_listed_with_mutual_inductance():
    text = """\
title Coupled pair
frequency 1 kHz
Vd: voltage   d -> 0   10 V
R1: resistor  d -> p   10 ohm
L1: inductor  p -> 0   10 mH
L2: inductor  s -> 0   40 mH
RL: resistor  s -> 0   50 ohm
K12: coupling L1 L2   k 0.5
"""
    (pair,) = context(text)["couplings"]
    # check-values C34: M = k·√(L1·L2) = 0.5·√(10 mH · 40 mH) = 10 mH (formula).
    assert pair == {"name": "K12", "inductors": "L1 and L2", "k": "0.5", "m": "10 mH", "line": 8}


# ---- assumptions and warnings --------------------------------------------------------

def test_assumptions_state_conventions():
    terms = {a["term"]: a["text"] for a in context(RC_BENCH)["assumptions"]}
    assert "50 Hz" in terms["Analysis frequency"]
    assert "314.2 rad/s" in terms["Analysis frequency"]          # ω = 2π·50 (formula)
    assert "RMS" in terms["Amplitudes"] and "V·I*" in terms["Amplitudes"]
    assert "V(p) − V(n)" in terms["Reference direction"]
    assert "Passive sign" in terms["Sign of power"]
    assert "Node 0" in terms["Ground"]
    peak = {a["term"]: a["text"] for a in context(RC_BENCH.replace(
        "frequency 50 Hz", "frequency 50 Hz\namplitudes peak"))["assumptions"]}
    assert "peak" in peak["Amplitudes"] and "½·V·I*" in peak["Amplitudes"]


def test_auto_chosen_reference_and_its_warning():
    # circuit-language.md: an isolated part gets one of its nodes as reference, with a warning
    ctx = context(open_sample("pump-station-transformer"))
    terms = {a["term"]: a["text"] for a in ctx["assumptions"]}
    assert "lvn" in terms["Isolated parts"]
    assert "Transformers" in terms
    assert any(w["line"] == 8 and "lvn" in w["message"] for w in ctx["warnings"])
    tx = row(ctx, "Tx")
    assert tx["secondary_terminals"] == "lv → lvn" and tx["secondary"]["voltage"].endswith("°")


def test_cautions_are_the_one_text():
    # DEVELOPERS.md: the cautions' text has one home, cautions.py
    ctx = context(RC_BENCH)
    assert [(c["title"], c["text"]) for c in ctx["cautions"]] == list(CAUTIONS)
    assert ctx["scope_note"] == SCOPE_NOTE


# ---- pictures --------------------------------------------------------------------------

def test_default_pictures_are_sources_then_reactive_elements():
    ctx = context(RC_BENCH)
    assert ctx["waveforms"]["names"] == ["V1", "C1"]
    assert ctx["waveforms"]["chosen_by"] == "default"
    # The phasor diagram leads with the first element that is not a source.
    assert ctx["phasors"]["names"] == ["C1", "V1"]
    for picture in ctx["waveforms"]["pictures"]:
        assert picture["svg"].startswith("<svg ") and "http" not in picture["svg"]
    assert [p["delivers"] for p in ctx["waveforms"]["pictures"]] == [True, False]
    assert "http" not in ctx["phasors"]["svg"]


def test_big_circuit_caps_the_default_set():
    ctx = context(ladder(200))
    waves = ctx["waveforms"]
    assert len(waves["pictures"]) == DEFAULT_WAVEFORMS
    # 1 source + 66 inductors + 66 capacitors are candidates (ladder of 199 = 3 × 66 + 1).
    assert waves["candidates"] == 133 and waves["left_out"] == 133 - DEFAULT_WAVEFORMS
    assert waves["names"][0] == "Vs"
    assert len(ctx["elements"]) == 200                   # the table keeps every element


def test_reader_choice_is_kept_and_checked():
    # common practice, no source: repeats dropped, unknown names refused
    ctx = context(RC_BENCH, waveform_elements=["R1", "R1", "V1"], phasor_elements=["R1"])
    assert ctx["waveforms"]["names"] == ["R1", "V1"] and ctx["waveforms"]["chosen_by"] == "reader"
    assert ctx["phasors"]["names"] == ["R1"]
    with pytest.raises(CircuitError) as info:
        context(RC_BENCH, waveform_elements=["R1", "Rnope"])
    assert "Rnope" in info.value.diagnostics[0].message
    with pytest.raises(CircuitError):
        context(RC_BENCH, waveform_elements=[])
    many = [f"C{k}" for k in range(20)]
    ctx = context(ladder(61), phasor_elements=many)
    assert ctx["phasors"]["names"] == many[:MAX_PHASORS] and ctx["phasors"]["left_out"] == 8


def test_arrow_angles_follow_the_formula():
    svg = context(RC_BENCH, phasor_elements=["R1", "C1"])["phasors"]["svg"]
    # The drawing states each arrow's angle; with R = Xc the current leads by 45°, V(C1)
    # lags it by 90° (formula above).
    for quantity, element, deg in (("current", "R1", 45.0), ("voltage", "C1", -45.0)):
        tag = f'data-element="{element}" data-quantity="{quantity}" data-deg="'
        start = svg.index(tag) + len(tag)
        assert math.isclose(float(svg[start:svg.index('"', start)]), deg, abs_tol=1e-6)


def test_optional_sections_absent_by_default_and_shown_when_given():
    ctx = context(RC_BENCH)
    assert ctx["correction"] is None and ctx["port"] is None
    # check-values C14: Qc = 1685.26 var, C = 310.438 µF (Alexander & Sadiku PFC example).
    ctx = context(RC_BENCH, correction={"title": "To 0.95 lagging", "q_c_var": -1685.26,
                                        "c_f": 310.438e-6, "pf_after": 0.95},
                  port={"v_th": {"re": 129.231, "im": -73.8462, "mag": 148.842, "deg": -29.7449}})
    rows = {r["label"]: r["text"] for r in ctx["correction"]["rows"]}
    assert rows == {"q_c_var": "-1.685 kvar", "c_f": "310.4 µF", "pf_after": "0.95"}
    assert ctx["correction"]["title"] == "To 0.95 lagging"
    # check-values C29: V_th = 148.842 V ∠-29.7449°.
    assert ctx["port"]["rows"] == [{"label": "v_th", "text": "148.8 V ∠-29.74°"}]


def open_sample(name: str) -> str:
    from .conftest import ROOT
    return (ROOT / "samples" / f"{name}.circuit").read_text(encoding="utf-8")

