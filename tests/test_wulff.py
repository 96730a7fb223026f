"""Wulff construction on crystals: closed forms, invariants, refusals."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit.crystal import Crystal
from habit.errors import InputError, InvalidMillerIndexError, OpenShapeError
from habit.wulff import wulff_shape

CUBIC = Crystal.from_cell(4.0782, crystal_class="m-3m", name="gold-like cubic")
# quartz cell (Handbook of Mineralogy): a 4.9133, c 5.4053 Å
QUARTZ = Crystal.from_cell(4.9133, c=5.4053, crystal_class="32", name="quartz")


def shape(r, g110=None):
    forms = {"100": 1.0, "111": r}
    if g110 is not None:
        forms["110"] = g110
    return wulff_shape(CUBIC, forms)


def present(s):
    return {f.label for f in s.present_forms}


# {100}+{111}, r = γ111/γ100: octahedron for r <= 1/√3 and cube for r >= √3 (the {111}
# plane at distance r passes the cube corner (1,1,1), at distance √3, exactly when
# r = √3; the {100} plane touches the octahedron vertex (r√3, 0, 0) when r = 1/√3).
@pytest.mark.parametrize("r", [0.3, 0.5, 1 / math.sqrt(3) - 1e-9])
def test_octahedron_below_one_over_root_three(r):
    s = shape(r)
    assert present(s) == {"{111}"}
    assert s.polyhedron.n_faces == 8
    # regular octahedron of inradius r: V = 4√3 r³ (closed form)
    assert s.polyhedron.volume == pytest.approx(4 * math.sqrt(3) * r**3, rel=1e-9)


@pytest.mark.parametrize("r", [math.sqrt(3) + 1e-9, 2.0, 5.0])
def test_cube_above_root_three(r):
    s = shape(r)
    assert present(s) == {"{100}"}
    assert s.polyhedron.volume == pytest.approx(8.0, rel=1e-9)  # cube of half-width 1


def test_cuboctahedron_at_two_over_root_three():
    s = shape(2 / math.sqrt(3))
    poly = s.polyhedron
    assert (poly.n_vertices, poly.n_edges, poly.n_faces) == (12, 24, 14)
    assert poly.volume == pytest.approx(20 / 3, rel=1e-9)  # V = 20/3 for h100 = 1
    assert s.shape_name() == "cuboctahedron"


def test_regular_truncated_octahedron_at_root_three_over_two():
    s = shape(math.sqrt(3) / 2)
    lengths = s.polyhedron.edge_lengths
    assert len(lengths) == 36
    assert np.ptp(lengths) < 1e-9 * lengths.max()  # all edges equal
    assert s.shape_name() == "truncated octahedron"


@pytest.mark.parametrize("r", [0.8, math.sqrt(3) / 2, 1.0, 1.1])
def test_110_present_exactly_below_threshold(r):
    # {110} has area iff γ110/γ100 < min(r √(3/2), √2) (closed form: the {110} plane
    # must cut inside the edge of the {100}/{111} shape at distance r √(3/2) or √2)
    threshold = min(r * math.sqrt(1.5), math.sqrt(2))
    assert "{110}" in present(shape(r, threshold * (1 - 1e-6)))
    assert "{110}" not in present(shape(r, threshold * (1 + 1e-6)))


@settings(max_examples=30, deadline=None)
@given(st.floats(0.3, 2.5), st.floats(0.6, 1.6), st.floats(0.2, 5.0))
def test_scaling_energies_keeps_fractions(r, g110, factor):
    a = shape(r, g110)
    b = wulff_shape(CUBIC, {"100": factor, "111": r * factor, "110": g110 * factor})
    fa = [f.area_fraction for f in a.forms]
    fb = [f.area_fraction for f in b.forms]
    assert np.allclose(fa, fb, atol=1e-9)
    assert b.polyhedron.volume == pytest.approx(a.polyhedron.volume * factor**3, rel=1e-9)


@settings(max_examples=30, deadline=None)
@given(st.floats(0.3, 2.5), st.floats(0.6, 1.6))
def test_form_order_does_not_matter(r, g110):
    a = wulff_shape(CUBIC, {"100": 1.0, "111": r, "110": g110})
    b = wulff_shape(CUBIC, {"110": g110, "111": r, "100": 1.0})
    by_label_a = {f.label: f.area_fraction for f in a.forms}
    by_label_b = {f.label: f.area_fraction for f in b.forms}
    assert by_label_a.keys() == by_label_b.keys()
    for key in by_label_a:
        assert by_label_a[key] == pytest.approx(by_label_b[key], abs=1e-12)
    assert a.polyhedron.volume == pytest.approx(b.polyhedron.volume, rel=1e-12)


def test_mean_energy_is_area_weighted():
    s = shape(1.0, 1.2)
    expected = sum(f.value * f.area for f in s.forms) / sum(f.area for f in s.forms)
    assert s.mean_energy == pytest.approx(expected, rel=1e-12)
    assert min(f.value for f in s.present_forms) <= s.mean_energy


def test_hexagonal_prism_with_pinacoid_volume():
    # {10-10} at distance 1 and {0001} at distance h: a hexagonal prism of inradius 1
    # (area of the hexagon 2√3) and height 2h: V = 4√3 h (closed form)
    s = wulff_shape(QUARTZ, {"10-10": 1.0, "0001": 1.7}, kind="distance")
    assert s.polyhedron.volume == pytest.approx(4 * math.sqrt(3) * 1.7, rel=1e-9)
    # in class 32 (quartz) {10-10} is the hexagonal prism m, 6 faces (common practice)
    assert {f.label: f.multiplicity for f in s.forms}["{10-10}"] == 6


REFUSED = [
    ({"100": 0.0}, InputError, "positive"),
    ({"100": -1.0}, InputError, "positive"),
    ({"100": float("nan")}, InputError, "positive"),
    ({"100": 1.0, "010": 1.2}, InputError, "twice"),
    ({"10-11": 1.0}, InvalidMillerIndexError, "four indices"),
]


@pytest.mark.parametrize(("forms", "error", "fragment"), REFUSED, ids=[r[2] for r in REFUSED])
def test_bad_forms_are_refused(forms, error, fragment):
    with pytest.raises(error) as info:
        wulff_shape(CUBIC, forms)
    assert fragment in str(info.value)


def test_open_forms_name_a_direction():
    # a hexagonal prism alone is open along the c axis, [0001]
    with pytest.raises(OpenShapeError) as info:
        wulff_shape(QUARTZ, {"10-10": 1.0})
    assert "[0001]" in str(info.value)


# --- invariants over random classes, cells and energies ----------------------------------
from habit.miller import reduce_indices  # noqa: E402
from habit.symmetry import POINT_GROUP_SYMBOLS, point_group  # noqa: E402

BOX = [(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)]


@st.composite
def crystals(draw):
    symbol = draw(st.sampled_from(sorted(POINT_GROUP_SYMBOLS)))
    system = point_group(symbol).system
    length = st.floats(3.0, 12.0)
    a, b, c = draw(length), draw(length), draw(length)
    if system == "cubic":
        return Crystal.from_cell(a, crystal_class=symbol)
    if system == "tetragonal":
        return Crystal.from_cell(a, c=c, crystal_class=symbol)
    if system in ("hexagonal", "trigonal"):
        return Crystal.from_cell(a, c=c, crystal_class=symbol)
    if system == "orthorhombic":
        return Crystal.from_cell(a, b, c, crystal_class=symbol)
    if system == "monoclinic":
        beta = draw(st.floats(92.0, 125.0))
        return Crystal.from_cell(a, b, c, 90, beta, 90, crystal_class=symbol)
    angles = [draw(st.floats(70.0, 110.0)) for _ in range(3)]
    return Crystal.from_cell(a, b, c, *angles, crystal_class=symbol)


@st.composite
def crystal_and_forms(draw):
    crystal = draw(crystals())
    forms = {h: 2.0 for h in BOX}  # a closing box of pinacoid/pedion faces, all at 2.0
    def key(hkl):  # a form as its set of faces, (202) being the face (101)
        return tuple(sorted(map(tuple, reduce_indices(crystal.expand_form(hkl)).tolist())))

    seen = {key(h) for h in BOX}
    index = st.integers(-2, 2)
    for _ in range(draw(st.integers(1, 4))):
        hkl = (draw(index), draw(index), draw(index))
        if sum(1 for x in hkl if x) < 2:
            continue
        if key(hkl) in seen:
            continue
        seen.add(key(hkl))
        forms[hkl] = draw(st.floats(0.9, 1.9))
    return crystal, forms


@settings(max_examples=40, deadline=None)
@given(crystal_and_forms(), st.floats(0.2, 5.0), st.randoms(use_true_random=False))
def test_wulff_invariants_over_random_classes(data, factor, rnd):
    crystal, forms = data
    shape = wulff_shape(crystal, forms)
    poly = shape.polyhedron
    # every face lies at its energy from the Wulff point: all its vertices are on the plane
    for f, loop in enumerate(poly.faces):
        heights = poly.vertices[loop] @ poly.normals[f]
        assert np.allclose(heights, poly.distances[f], atol=1e-9 * poly.circumradius)
    value_of = {f.label: f.value for f in shape.forms}
    labels = [shape.forms[i].label for i in poly.form_ids]
    assert np.allclose(poly.distances, [value_of[lab] for lab in labels])
    # Euler's formula and Descartes' total angle defect of 4π (720°)
    assert poly.n_vertices - poly.n_edges + poly.n_faces == 2
    assert float(np.sum(poly.angle_defects)) == pytest.approx(4 * math.pi, abs=1e-9)
    # a shape built from whole forms has at least the symmetry of the crystal class
    assert shape.symmetry().contains(crystal.cartesian_operations)
    # scaling every energy scales lengths; area fractions do not change
    scaled = wulff_shape(crystal, {h: v * factor for h, v in forms.items()})
    assert scaled.polyhedron.volume == pytest.approx(poly.volume * factor**3, rel=1e-9)
    assert np.allclose(
        [f.area_fraction for f in scaled.forms], [f.area_fraction for f in shape.forms], atol=1e-9
    )
    # the order in which forms are given does not matter
    items = list(forms.items())
    rnd.shuffle(items)
    shuffled = wulff_shape(crystal, dict(items))
    assert shuffled.polyhedron.volume == pytest.approx(poly.volume, rel=1e-12)

    def key(form):  # a form is its set of faces, whichever face was typed
        return frozenset(map(tuple, crystal.expand_form(form.hkl).tolist()))

    by_form = {key(f): f.area_fraction for f in shuffled.forms}
    assert by_form.keys() == {key(f) for f in shape.forms}
    for f in shape.forms:
        assert by_form[key(f)] == pytest.approx(f.area_fraction, abs=1e-12)


def test_regression_multiple_of_a_face_is_the_same_form():
    # found by the random-class invariants: in class -31m, {202} (the face (101) written
    # with a common factor) and {011} are one form; they must count once, not twice
    crystal = Crystal.from_cell(5.0, c=7.0, crystal_class="-31m")
    shape = wulff_shape(crystal, {(2, 0, 2): 0.9, (0, 1, 1): 0.9, (0, 0, 1): 1.2, (1, 0, 0): 1.0})
    assert len(shape.forms) == 3
    assert sum(f.area_fraction for f in shape.forms) == pytest.approx(1.0, abs=1e-12)
    with pytest.raises(InputError, match="twice"):
        wulff_shape(crystal, {(2, 0, 2): 0.9, (0, 1, 1): 1.0, (0, 0, 1): 1.2})
