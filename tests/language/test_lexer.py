"""Tests of the tokenizer (language/lexer.py): token kinds, columns, glue and comments.

Expectations come from the language design (circuit-language.md: `#` comments, `->`,
prefixes glued to the number, the degree sign) and from how messages count columns
(from 1, one column per character).
"""

from __future__ import annotations

import pytest

from phasorbench.language.lexer import tokenize


def texts(line: str) -> list[str]:
    return [t.text for t in tokenize(line)[0]]


def test_element_line_tokens_kinds_and_columns():
    tokens, comment = tokenize("R1: resistor a->b 4.7k  # load")
    assert [t.text for t in tokens] == ["R1", ":", "resistor", "a", "->", "b", "4.7", "k"]
    assert [t.kind for t in tokens] == ["word", "punct", "word", "word", "arrow", "word",
                                        "number", "word"]
    # columns count from 1, one per character: circuit-language.md ("Lines and columns
    # count from 1")
    assert [t.column for t in tokens] == [1, 3, 5, 14, 15, 17, 19, 22]
    assert comment == "load"          # circuit-language.md: '#' runs to the end of the line


def test_glue_tells_a_prefix_from_a_separate_word():
    # circuit-language.md: a prefix may be glued to the number (4.7k) or to the unit (2.2 mH)
    glued = tokenize("4.7k")[0]
    apart = tokenize("4.7 k")[0]
    assert [t.glued for t in glued] == [False, True]
    assert [t.glued for t in apart] == [False, False]


@pytest.mark.parametrize("text, expected", [
    ("12", ["12"]),                    # circuit-language.md number spellings
    ("-3.5", ["-", "3.5"]),            # the sign is an operator of the value grammar
    ("1.5e-3", ["1.5e-3"]),
    (".5", [".5"]),
    ("2E+6", ["2E+6"]),
])
def test_number_spellings(text, expected):
    assert texts(text) == expected


def test_both_arrow_spellings():
    # common practice, no source: the typographic arrow reads like '->'
    assert [t.kind for t in tokenize("a -> b")[0]] == ["word", "arrow", "word"]
    assert [t.kind for t in tokenize("a → b")[0]] == ["word", "arrow", "word"]


def test_degree_sign_is_a_word_of_its_own():
    # circuit-language.md: `10∠36.87° Ω`, and a unit may end the value; written without
    # the space the degree sign must still end the angle
    assert texts("10∠36.87°Ω") == ["10", "∠", "36.87", "°", "Ω"]
    assert texts("36.87°ohm") == ["36.87", "°", "ohm"]


def test_micro_and_ohm_signs_start_words():
    # circuit-language.md: `150µ`, `0.15 Ω`
    assert texts("150µF") == ["150", "µF"]
    assert texts("0.15 Ω") == ["0.15", "Ω"]


def test_imaginary_word_with_signed_exponent_is_one_token():
    # circuit-language.md: `-j40`, `j5.1`; an exponent's sign belongs to the number
    assert texts("-j40") == ["-", "j40"]
    assert texts("j1e-3") == ["j1e-3"]


def test_comment_only_line_has_no_tokens():
    tokens, comment = tokenize("   # only words here -> 5 ohm")
    assert tokens == []
    assert comment == "only words here -> 5 ohm"     # circuit-language.md: comments


def test_hash_inside_a_line_ends_it():
    assert texts("V1: voltage a -> 0 1 V # 2 V") == ["V1", ":", "voltage", "a", "->", "0",
                                                      "1", "V"]


def test_unknown_characters_are_kept_as_other_tokens():
    # common practice, no source: a stray character must reach the reader (to be reported
    # with its column), not vanish
    tokens = tokenize("R1 $ 5")[0]
    assert [(t.kind, t.text, t.column) for t in tokens] == [
        ("word", "R1", 1), ("other", "$", 4), ("number", "5", 6)]


def test_tab_counts_as_one_column():
    # common practice, no source: a column is a character, whatever its width on screen
    tokens = tokenize("R1:\tresistor")[0]
    assert [t.column for t in tokens] == [1, 3, 5]


def test_spans_cover_the_token_text():
    line = "Zm: impedance c -> 0 8.2 + j5.1 ohm  @ 10 deg"
    for token in tokenize(line)[0]:
        assert line[token.start:token.end] == token.text      # common practice, no source
