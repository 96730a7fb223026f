"""Shared option parsers of the CLI (habit/cli/_common.py), alone and through commands."""

from __future__ import annotations

import pytest

from habit.cli import main
from habit.cli._common import parse_assignments, parse_form_options
from habit.crystal import Crystal
from habit.errors import InputError


def test_assignments_keep_order_and_strip_keys() -> None:
    got = parse_assignments(
        ("Cu = 1.28", "O=1.40"), "--radius", metavar="SYMBOL=VALUE", example="Cu=1.28"
    )
    assert got == [("Cu", 1.28), ("O", 1.40)]
    assert parse_assignments(("Ca2+=8",), "--coordination", metavar="ION=CN", example="", cast=int)[
        0
    ] == ("Ca2+", 8)


@pytest.mark.parametrize(
    "text", ["Cu", "Cu=", "Cu=big", "=x"], ids=["no-equals", "empty", "word", "key-only"]
)
def test_a_bad_assignment_is_one_sentence_naming_the_option(text: str) -> None:
    with pytest.raises(InputError) as info:
        parse_assignments((text,), "--radius", metavar="SYMBOL=VALUE", example="Cu=1.28")
    message = str(info.value)
    assert message.startswith("--radius takes SYMBOL=VALUE, e.g. Cu=1.28")
    assert repr(text) in message and "\n" not in message


def test_form_options_use_the_crystal_s_miller_rules() -> None:
    # hexagonal four-index input is converted with i = -(h + k) (common practice)
    hexagonal = Crystal.from_cell(3.25, 3.25, 5.2, 90, 90, 120, crystal_class="6mm")
    got = parse_form_options(hexagonal, ("10-10=1.0", "0001=1.2"))
    assert got == [((1, 0, 0), 1.0), ((0, 0, 1), 1.2)]
    with pytest.raises(InputError, match="--form takes HKL=VALUE"):
        parse_form_options(hexagonal, ("10-10",))


CUBIC_INLINE = ["--cell", "4.08,4.08,4.08,90,90,90", "--class", "m-3m"]


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        (["wulff", *CUBIC_INLINE, "--form", "111"], "--form takes HKL=VALUE, e.g. 111=1.0"),
        (
            ["particle", "copper", "--atoms", "100", "--form", "111=x"],
            "--form takes HKL=VALUE, e.g. 111=1.95",
        ),
        (["apf", "copper", "--radius", "Cu"], "--radius takes SYMBOL=VALUE (Å)"),
        (["apf", "copper", "--coordination", "Cu=12.5"], "--coordination takes ION=CN"),
        (["bonds", "copper", "--bond-energy", "Cu-Cu"], "--bond-energy takes A-B=VALUE (eV)"),
    ],
    ids=["wulff", "particle", "apf-radius", "apf-cn", "bonds"],
)
def test_commands_refuse_bad_assignments_in_one_line(runner, args, fragment) -> None:
    result = runner.invoke(main, args)
    assert result.exit_code != 0
    assert fragment in result.output
    assert "Traceback" not in result.output
    assert len(result.output.strip().splitlines()) == 1


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        (["wulff", "copper", "--plot", "shape.txt"], "--plot writes .png, .svg or .pdf"),
        (["bfdh", "copper", "--export", "shape.ply"], "--export writes .stl, .obj or .json"),
        (["bonds", "copper", "--plot", "shape.gif"], "--plot writes .png, .svg or .pdf"),
        (["dual", "cube", "--export", "dual.wrl"], "--export writes .stl, .obj or .json"),
        (["pack", "cube", "--plot", "pack.eps"], "--plot writes .png, .svg or .pdf"),
    ],
    ids=["wulff", "bfdh", "bonds", "dual", "pack"],
)
def test_unwritable_file_types_are_refused_before_any_work(
    runner, tmp_path, monkeypatch, args, fragment
) -> None:
    monkeypatch.chdir(tmp_path)
    result = runner.invoke(main, args)
    assert result.exit_code != 0
    assert fragment in result.output
    assert len(result.output.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []  # nothing written
