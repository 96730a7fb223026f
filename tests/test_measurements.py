"""Reading and validating measured faces (habit.measurements)."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit.errors import FileFormatError, InputError
from habit.measurements import (
    measurements_from_arrays,
    parse_measurements,
    read_measurements,
)

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def test_two_circle_csv():
    text = "# a comment\nlabel,phi_deg,rho_deg,sigma_deg\nb,0,90,0.1\na,90,90,0.2\nc,45,0,0.1\n"
    m = parse_measurements(text, "csv")
    assert m.kind == "two-circle"
    assert m.labels == ("b", "a", "c")
    # (φ, ρ) = (0, 90) is +y and (90, 90) is +x in Goldschmidt's convention (from memory)
    assert m.normals[0] == pytest.approx([0, 1, 0], abs=1e-12)
    assert m.normals[1] == pytest.approx([1, 0, 0], abs=1e-12)
    assert m.normals[2] == pytest.approx([0, 0, 1], abs=1e-12)
    assert m.weights[1] == pytest.approx(math.radians(0.2) ** -2)


def test_normals_and_angles_csv():
    m = parse_measurements("label,x,y,z\nf1,1,0,0\nf2,0,0.6,0.8\n", "csv")
    assert m.kind == "normals" and m.n_faces == 2
    t = parse_measurements("face1,face2,angle_deg\nr,m,38.2\nr,z,46.3\nm,z,67\n", "csv")
    assert t.kind == "interfacial-angles"
    assert t.labels == ("r", "m", "z")
    assert t.pairs.tolist() == [[0, 1], [0, 2], [1, 2]]
    assert np.degrees(t.angles) == pytest.approx([38.2, 46.3, 67.0])


def test_toml_kinds():
    text = """
specimen = "test piece (invented)"
[convention]
phi_zero_deg = 30.0
phi_sense = "counterclockwise"
[[face]]
label = "p"
phi_deg = 30.0
rho_deg = 90.0
"""
    m = parse_measurements(text, "toml")
    assert m.specimen.startswith("test piece")
    assert m.normals[0] == pytest.approx([0, 1, 0], abs=1e-12)  # φ = φ0 → +y
    n = parse_measurements('[[face]]\nnormal = [0, 0, 2]\n', "toml", normalize=True)
    assert n.normals[0] == pytest.approx([0, 0, 1])
    a = parse_measurements('[[angle]]\nfaces = ["a", "b"]\nangle_deg = 60\n', "toml")
    assert a.kind == "interfacial-angles"


@pytest.mark.parametrize(
    "text, fmt, fragment",
    [
        ("label,phi_deg,rho_deg\na,0,190\n", "csv", "rho 190 degrees is out of range"),
        ("label,phi_deg,rho_deg\na,400,10\n", "csv", "phi 400 degrees is out of range"),
        ("label,x,y,z\na,0,0,0\n", "csv", "zero or not finite"),
        ("label,x,y,z\na,1,1,0\n", "csv", "length 1.414, not 1"),
        ("label,phi_deg,rho_deg\na,0,10\na,5,20\n", "csv", "'a' appears twice"),
        ("label,phi_deg\na,0\n", "csv", "missing column 'rho_deg'"),
        ("label,phi_deg,rho_deg,colour\na,0,1,red\n", "csv", "unknown column 'colour'"),
        ("face1,face2,angle_deg\na,b,185\n", "csv", "185 degrees is out of range"),
        ("face1,face2,angle_deg\na,a,85\n", "csv", "cannot be paired with itself"),
        ("face1,face2,angle_deg\na,b,85\nb,a,86\n", "csv", "listed twice"),
        ("label,phi_deg,rho_deg,weight,sigma_deg\na,0,1,1,1\n", "csv", "not both"),
        ("label,phi_deg,rho_deg\na,zero,1\n", "csv", "'zero' is not a number"),
        ("label,phi_deg,rho_deg\n", "csv", "no data rows"),
        ("label,phi_deg,rho_deg\na,1\n", "csv", "has 2 fields"),
        ("[[face]]\nlabel='a'\n", "toml", "needs phi_deg and rho_deg"),
        ("colour = 1\n", "toml", "unknown key 'colour'"),
        ("[[face]]\nphi_deg = 1\nrho_deg = 2\nsigma = 1\n", "toml", "unknown key 'sigma'"),
        ("[[face]]\nphi_deg = 1\nrho_deg = 2\nnormal = [0, 0, 1]\n", "toml",
         "both a normal and phi/rho"),
        ("[[angle]]\nfaces = ['a', 'b']\nangle_deg = 50\nangle = 3\n", "toml",
         "unknown key 'angle'"),
        ("[[face]]\nphi_deg = 1\nrho_deg = [\n", "toml", "not valid TOML"),
        ("[convention]\nphi_sense='sideways'\n[[face]]\nphi_deg=1\nrho_deg=2\n", "toml",
         "phi_sense must be"),
    ],
)
def test_refusals_name_the_problem(text, fmt, fragment):
    with pytest.raises(FileFormatError) as info:
        parse_measurements(text, fmt, source="m.csv")
    message = str(info.value)
    assert fragment in message
    assert "\n" not in message  # one sentence, one line


def test_array_refusals():
    with pytest.raises(InputError, match="exactly one kind"):
        measurements_from_arrays()
    with pytest.raises(InputError, match="2 labels for 3 faces"):
        measurements_from_arrays(labels=["a", "b"], phi_deg=[0, 1, 2], rho_deg=[1, 2, 3])
    with pytest.raises(InputError, match="sigma_deg must be"):
        measurements_from_arrays(phi_deg=[0], rho_deg=[1], sigma_deg=[-1])


def test_files(tmp_path):
    with pytest.raises(FileFormatError, match="no such file"):
        read_measurements(tmp_path / "missing.csv")
    p = tmp_path / "m.txt"
    p.write_text("x")
    with pytest.raises(FileFormatError, match="use .csv or .toml"):
        read_measurements(p)


@pytest.mark.parametrize("name", ["rutile-two-circle.toml", "quartz-contact-angles.csv",
                                  "zircon-normals.csv"])
def test_bundled_examples_read_and_say_invented(name):
    path = EXAMPLES / name
    m = read_measurements(path)
    assert m.n_faces >= 7
    assert "INVENTED" in path.read_text()


def test_measurements_are_frozen():
    m = measurements_from_arrays(phi_deg=[0, 1], rho_deg=[1, 2])
    with pytest.raises(AttributeError):
        m.kind = "normals"  # type: ignore[misc]
    with pytest.raises(ValueError):
        m.normals[0, 0] = 2.0


@settings(max_examples=40, deadline=None)
@given(
    rows=st.lists(
        st.tuples(st.floats(-360, 360), st.floats(0, 180), st.floats(0.01, 5.0)),
        min_size=1, max_size=8,
    )
)
def test_two_circle_csv_round_trip(rows):
    # invariant: numbers written to a CSV come back unchanged (repr round trip)
    lines = ["label,phi_deg,rho_deg,sigma_deg"]
    lines += [f"f{i},{p!r},{r!r},{s!r}" for i, (p, r, s) in enumerate(rows)]
    m = parse_measurements("\n".join(lines) + "\n", "csv")
    assert np.degrees(m.phi) == pytest.approx([p for p, _, _ in rows], abs=1e-9)
    assert np.degrees(m.rho) == pytest.approx([r for _, r, _ in rows], abs=1e-9)
    assert np.linalg.norm(m.normals, axis=1) == pytest.approx(np.ones(len(rows)))
    assert m.weights == pytest.approx([math.radians(s) ** -2 for _, _, s in rows])
