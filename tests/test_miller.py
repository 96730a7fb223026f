"""Reading and writing Miller indices."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from habit import miller
from habit.errors import InvalidMillerIndexError

GOOD = [
    ("1 0 -1 1", (1, 0, 1)),
    ("10-11", (1, 0, 1)),
    ("(10-11)", (1, 0, 1)),
    ("{111}", (1, 1, 1)),
    ("-1 1 0", (-1, 1, 0)),
    ("1,1,0", (1, 1, 0)),
    ("(2 -1 -1 0)", (2, -1, 0)),
    (" 1 0 12 ", (1, 0, 12)),
    ("{-2-11}", (-2, -1, 1)),
    ("1;2;3", (1, 2, 3)),
]


@pytest.mark.parametrize(("text", "expected"), GOOD, ids=[g[0] for g in GOOD])
def test_parse_hkl_accepts_what_people_type(text, expected):
    assert miller.parse_hkl(text) == expected


BAD = [
    ("000", "(000)"),
    ("0 0 0 0", "(000)"),
    ("1.5 1 0", "whole numbers"),
    ("1 0 1 1", "-(h+k)"),
    ("11", "2 indices"),
    ("(111", "unbalanced"),
    ("abc", "whole numbers"),
    ("[110]", "direction"),
    ("", "empty"),
    ("1 1 1 1 1", "5 indices"),
]


@pytest.mark.parametrize(("text", "fragment"), BAD, ids=[b[0] or "empty" for b in BAD])
def test_parse_hkl_refuses_with_one_sentence(text, fragment):
    with pytest.raises(InvalidMillerIndexError) as info:
        miller.parse_hkl(text)
    message = str(info.value)
    assert fragment in message
    assert "\n" not in message


def test_parse_uvw_four_index_direction():
    # [2-1-10] is the a1 axis on hexagonal axes: [100] (common practice)
    assert miller.parse_uvw("[2-1-10]") == (1, 0, 0)
    assert miller.parse_uvw("<0001>") == (0, 0, 1)
    with pytest.raises(InvalidMillerIndexError):
        miller.parse_uvw("(100)")


@given(st.tuples(*(st.integers(-9, 9) for _ in range(3))).filter(lambda t: any(t)))
def test_format_then_parse_round_trip(hkl):
    for hexagonal in (False, True):
        text = miller.format_hkl(hkl, hexagonal=hexagonal)
        assert miller.parse_hkl(text) == hkl


@given(st.tuples(*(st.integers(-6, 6) for _ in range(3))).filter(lambda t: any(t)))
def test_uvw_uvtw_round_trip_is_parallel(uvw):
    back = np.array(miller.uvtw_to_uvw(miller.uvw_to_uvtw(uvw)))
    # same direction up to a positive factor
    assert np.allclose(np.cross(back, uvw), 0)
    assert np.dot(back, uvw) > 0


def test_format_hexagonal_and_forms():
    assert miller.format_hkl((1, 0, 0), hexagonal=True) == "(10-10)"
    assert miller.format_hkl((1, 1, 1), brackets="{}") == "{111}"
    assert miller.format_hkl((1, 0, 12)) == "(1 0 12)"
    assert miller.format_uvw((0, 0, 1), hexagonal=True) == "[0001]"
