"""Look-alike characters: other scripts' digits, letters passing for Latin, a leading
byte-order mark (issue 9, item 9)."""

from __future__ import annotations

import pytest

from phasorbench.errors import CircuitError
from phasorbench.workflow import check_text, read_circuit

HEAD = "frequency 50 Hz\nV1: voltage a -> 0 10 V\n"


@pytest.mark.parametrize("digits, script, ascii_", [
    # Unicode 15.0 UCD: U+0665 U+0660 ARABIC-INDIC DIGIT FIVE/ZERO, U+FF11 U+FF10
    # FULLWIDTH DIGIT ONE/ZERO, U+0967 DEVANAGARI DIGIT ONE (Nd, decimal values 5 0 1 0 1)
    ("\u0665\u0660", "ARABIC-INDIC", "50"),
    ("\uff11\uff10", "FULLWIDTH", "10"),
    ("\u0967", "DEVANAGARI", "1"),
])
def test_only_ascii_digits_form_numbers(digits, script, ascii_):
    text = f"frequency {digits} Hz\nV1: voltage a -> 0 10 V\nR1: resistor a -> 0 5 ohm\n"
    with pytest.raises(CircuitError) as info:
        read_circuit(text)
    error = info.value.errors[0]
    assert (error.line, error.column) == (1, 11)
    assert script in error.hint and f"type '{ascii_}'" in error.hint


def test_a_digit_glued_to_a_number_is_an_error_too():
    # Unicode 15.0 UCD: U+0665 ARABIC-INDIC DIGIT FIVE; Python's float() would accept it
    with pytest.raises(CircuitError) as info:
        read_circuit(HEAD + "R1: resistor a -> 0 1\u0665 ohm\n")
    assert "ARABIC-INDIC" in info.value.errors[0].hint


def test_a_cyrillic_node_warns_and_names_the_character():
    # Unicode 15.0 UCD: U+0430 CYRILLIC SMALL LETTER A; UTS #39 confusables: U+0430 → 'a'
    text = HEAD + "R1: resistor a -> 0 5 ohm\nR2: resistor \u0430 -> 0 5 ohm\n"
    warnings = [d for d in check_text(text) if "looks like" in d.message]
    assert len(warnings) == 1
    w = warnings[0]
    assert (w.line, w.column, w.severity) == (4, 14, "warning")
    assert "CYRILLIC SMALL LETTER A (U+0430)" in w.message
    assert "different node from 'a'" in w.message


def test_a_mixed_script_node_warns():
    # UTS #39, section 5.1 (mixed-script detection): Latin and Greek letters in one name
    text = HEAD + "R1: resistor a -> b\u03bb 5 ohm\nR2: resistor b\u03bb -> 0 5 ohm\n"
    warnings = [d for d in check_text(text) if "looks like" in d.message]
    assert len(warnings) == 1 and "Greek and Latin" in warnings[0].message


def test_a_single_script_node_that_passes_for_nothing_is_quiet():
    # common practice, no source: a Greek λ alone looks like no Latin letter
    text = HEAD + "R1: resistor a -> \u03bb 5 ohm\nR2: resistor \u03bb -> 0 5 ohm\n"
    assert not [d for d in check_text(text) if "looks like" in d.message]


def test_a_lookalike_letter_in_an_element_name_is_pointed_out():
    # Unicode 15.0 UCD: U+0420 CYRILLIC CAPITAL LETTER ER; UTS #39 confusables: → 'P'
    with pytest.raises(CircuitError) as info:
        read_circuit(HEAD + "\u04201: resistor a -> 0 5 ohm\n")
    assert "CYRILLIC CAPITAL LETTER ER (U+0420), not the Latin 'P'" in info.value.errors[0].hint


def test_a_leading_byte_order_mark_reads_as_the_command_line_reads_it():
    # Unicode 15.0, section 23.8 (U+FEFF at the start of a text is a signature, not
    # content): the API's text and the CLI's decoded file read the same
    text = HEAD + "R1: resistor a -> 0 5 ohm\n"
    assert check_text("\ufeff" + text) == check_text(text) == []
    circuit = read_circuit("\ufeff" + text)
    assert sorted(circuit.elements) == ["R1", "V1"]


def test_a_byte_order_mark_gives_the_same_answer_through_the_api_and_the_cli(tmp_path, capsys):
    # Unicode 15.0, section 23.8: as above, end to end through both shells
    from phasorbench.cli import main
    from tests.web.conftest import Api
    from phasorbench.web import Settings, create_app
    text = HEAD + "R1: resistor a -> 0 5 ohm\n"
    path = tmp_path / "bom.circuit"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert main(["check", str(path)]) == 0
    api = Api(create_app(Settings(port=8000)))
    r = api.post("/api/check", json={"netlist": "\ufeff" + text})
    assert r.status_code == 200 and r.json()["errors"] == []
