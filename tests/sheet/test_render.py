"""The rendered sheet (sheet/render.py): complete, self-contained, escaped, proportional."""

from __future__ import annotations

import hashlib
import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from phasorbench.presentation.cautions import CAUTIONS, SCOPE_NOTE
from phasorbench.errors import CircuitError
from phasorbench.sheet import render_sheet
from phasorbench.sheet.render import cell_breaks
from phasorbench.workflow import solve_text

from ..test_properties import networks
from .conftest import HOSTILE, NOW, RC_BENCH, ROOT, element_text, ladder, visible_text

SAMPLES = sorted((ROOT / "samples").glob("*.circuit"))


def words(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture(scope="module", params=[p.stem for p in SAMPLES])
def sample(request):
    text = (ROOT / "samples" / f"{request.param}.circuit").read_text(encoding="utf-8")
    return text, render_sheet(text, f"{request.param}.circuit", now=NOW)


def test_every_sample_sheet_is_complete(sample):
    text, html = sample
    result = solve_text(text)
    shown = visible_text(html)
    assert html.startswith("<!doctype html>")
    # The input verbatim: the listing's text (Python's HTML parser decodes the escapes)
    # is the input, character for character.
    assert element_text(html, "pre", "source") == text
    # Its hash, computed here by hashlib (FIPS 180-4), not read from the program.
    assert hashlib.sha256(text.encode("utf-8")).hexdigest() in shown
    for name in result["elements"]:
        assert re.search(rf">{re.escape(name)}</a></th>", html), name   # one row each
    for name in result["nodes"]:
        assert f"<td>{name}</td>" in html, name
    for title, body in CAUTIONS:
        assert words(f"{title}. {body}") in shown
    assert words(SCOPE_NOTE) in shown
    assert "How to check this sheet" in shown
    for warning in result["warnings"]:
        assert words(warning["message"]) in shown


def test_sample_sheet_refers_to_nothing_outside_itself(sample):
    _, html = sample
    lowered = html.lower()
    # No address of any kind (RFC 3986 schemes), so nothing is fetched and nothing leaks.
    for needle in ("http:", "https:", "//", "<script", "<link", "<iframe", "<img", "url(",
                   "@import", "src="):
        if needle == "//":
            assert not re.search(r"[\"'(]//", lowered), needle     # protocol-relative
            continue
        assert needle not in lowered, needle
    # Every link points inside the sheet (a fragment of this document).
    assert set(re.findall(r'href="(.)', html)) <= {"#"}


def test_sheet_is_deterministic_for_a_fixed_moment():
    # common practice, no source: same input and moment, same bytes
    assert render_sheet(RC_BENCH, now=NOW) == render_sheet(RC_BENCH, now=NOW)


def test_markup_in_the_circuit_stays_text():
    html = render_sheet(HOSTILE, now=NOW)
    lowered = html.lower()
    # No tag of the input's survives as markup (HTML Living Standard, 13.1.2: a tag
    # starts with "<" and a name): the sheet itself has no script, image or onload.
    assert not re.search(r"<(script|img|svg onload|a href=\"http)", lowered)
    # The address in a comment is text of the listing, never a link.
    assert set(re.findall(r'href="(.)', html)) <= {"#"}
    # ... and it is all there, as text.
    assert element_text(html, "pre", "source") == HOSTILE
    assert "<script>alert(1)</script> & \"quotes\" 'too'" in visible_text(html)
    heading = re.search(r'<h1 id="title">(.*?)</h1>', html).group(1)
    assert heading == "&lt;script&gt;alert(1)&lt;/script&gt; &amp; &#34;quotes&#34; &#39;too&#39;"


def test_bad_input_raises_circuit_error():
    # circuit-language.md: a capacitor/resistor unit mismatch is an input error
    with pytest.raises(CircuitError):
        render_sheet("frequency 50 Hz\nR1: resistor a -> 0 5 uH\n")


def test_missing_template_folder_fails_loudly(monkeypatch, tmp_path):
    # style-examples.md: a missing folder fails loudly, naming it
    monkeypatch.setenv("PHASORBENCH_TEMPLATES", str(tmp_path / "nowhere"))
    with pytest.raises(RuntimeError, match="nowhere"):
        render_sheet(RC_BENCH)
    monkeypatch.setenv("PHASORBENCH_TEMPLATES", str(tmp_path))
    with pytest.raises(RuntimeError, match="sheet.html"):
        render_sheet(RC_BENCH)


def test_cells_keep_a_number_with_its_unit():
    nbsp = "\u00a0"
    # A printed cell may break before the angle, never between a number and its unit
    # (common practice, no source: SI brochure 5.4.3 keeps a space, not a line break).
    assert cell_breaks("38.65 A ∠-6.61°") == f"38.65{nbsp}A ∠-6.61°"
    assert cell_breaks("-2.861 kvar") == f"-2.861{nbsp}kvar"
    assert cell_breaks("grid → dist") == f"grid{nbsp}→ dist"
    assert cell_breaks("0.8044 lagging", "pf") == "0.8044 lagging"


def test_optional_sections_render_when_given():
    html = render_sheet(RC_BENCH, now=NOW,
                        correction={"q_c_var": -1685.26, "notes": ["a <b> note"]},
                        port={"z_th": {"re": 8.15385, "im": 5.76923}})
    shown = visible_text(html)
    assert "Power-factor correction" in shown and "-1.685 kvar" in shown
    assert "a <b> note" in shown and "<b> note" not in html
    # check-values C29: Z_th = 8.15385 + j5.76923 Ω.
    assert "Port equivalent" in shown and "8.154 + j5.769 Ω" in shown
    plain = render_sheet(RC_BENCH, now=NOW)
    assert 'id="correction"' not in plain and 'id="port"' not in plain


# ---- large circuits -------------------------------------------------------------------

PICTURES = re.compile(r'<section id="(phasors|waveforms)".*?</section>', re.S)


@pytest.fixture(scope="module")
def sizes():
    """Bytes of the whole sheet and of its picture sections, by number of elements."""
    out = {}
    for n in (200, 1000, 2000):
        html = render_sheet(ladder(n), now=NOW)
        pictures = sum(len(m.group(0).encode("utf-8")) for m in PICTURES.finditer(html))
        out[n] = {"total": len(html.encode("utf-8")), "pictures": pictures}
    return out


def test_size_is_proportional_to_the_circuit(sizes):
    # The pictures are a capped set (one diagram, 12 waveforms): the same bytes at any size.
    assert abs(sizes[2000]["pictures"] - sizes[200]["pictures"]) < 0.01 * sizes[200]["pictures"]
    # Everything else (listing, tables, text) costs the same bytes per element at 200 and
    # at 2,000 elements, up to the few kilobytes of text every sheet has (common practice,
    # no source).
    per_element = {n: (s["total"] - s["pictures"]) / n for n, s in sizes.items()}
    assert 0.8 < per_element[2000] / per_element[200] <= 1.0, per_element
    assert per_element[2000] < 1000
    # And the whole grows linearly: the bytes added per element agree over two spans
    # (no part grows faster than the circuit).
    slope_low = (sizes[1000]["total"] - sizes[200]["total"]) / 800
    slope_high = (sizes[2000]["total"] - sizes[1000]["total"]) / 1000
    assert 0.85 < slope_high / slope_low < 1.15, (slope_low, slope_high)


def test_big_circuit_keeps_every_row_and_few_pictures():
    text = ladder(2000)
    html = render_sheet(text, now=NOW)
    assert html.count("<tr><th scope=\"row\">") == 2000          # every branch row
    assert html.count('<span class="ln"') == len(text.splitlines())
    assert html.count("<svg") == 1 + 12                          # one diagram, 12 waveforms
    assert "more of that kind are left out" in html


# ---- random circuits --------------------------------------------------------------------

@settings(max_examples=15, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(networks(), st.floats(10, 5000), st.floats(-180, 180))
def test_any_network_gives_a_complete_sheet(network, f, phase):
    _, lines = network
    text = (f"title Random <net> & co\nfrequency {f:.6g} Hz\n"
            f"Vs: voltage n1 -> 0 100 V phase {phase:.6g} deg\n" + "\n".join(lines) + "\n")
    html = render_sheet(text, now=NOW)
    assert element_text(html, "pre", "source") == text
    assert "http:" not in html and "https:" not in html
    result = solve_text(text)
    for name in result["elements"]:
        assert f">{name}</a></th>" in html
    # Every drawn arrow (a shaft; a round-off phasor is a dot) states its phasor's own
    # angle (results-contract.md: degrees), to 6 significant digits (within 1e-3°).
    arrows = re.findall(r'class="pb-shaft" data-element="([^"]+)" '
                        r'data-quantity="(voltage|current)" data-deg="([^"]+)"', html)
    assert arrows
    for name, quantity, deg in arrows:
        el = result["elements"][name]
        # a source is drawn with the current it delivers (its `delivered` phasor)
        z = (el["delivered"] if quantity == "current" and "delivered" in el else el)[quantity]
        assert abs((float(deg) - z["deg"] + 180) % 360 - 180) < 1e-3
