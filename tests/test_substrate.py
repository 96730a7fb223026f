"""Winterbottom construction: closed forms, limits, an independent half-space check and
the energy minimum."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import linprog
from scipy.spatial import ConvexHull, HalfspaceIntersection

from habit.crystal import Crystal
from habit.errors import HabitError, InputError
from habit.substrate import winterbottom_shape
from habit.wulff import wulff_shape

CUBIC = Crystal.from_cell(4.08, crystal_class="m-3m", name="cubic metal (invented)")
GAMMA = {"111": 1.0, "100": 1.1}  # invented energies, J/m²


def _free(energies=None):
    return wulff_shape(CUBIC, energies or GAMMA)


@pytest.mark.parametrize("beta", [0.0, 0.25, 0.5, 1.0, 1.5, 1.9])
def test_cube_on_its_face_closed_form(beta):
    # A cube of half-edge h = γ (1 J/m² -> 1 length unit) cut at h_int = h (1 - β/γ):
    # a box 2h x 2h x (h + h_int); contact area 4h², height h + h_int, width the
    # diagonal 2√2 h. Closed form; tolerance 1e-9.
    gamma = 1.0
    p = winterbottom_shape(wulff_shape(CUBIC, {"100": gamma}), "001", adhesion=beta)
    h_int = 1.0 - beta / gamma
    assert p.h_interface == pytest.approx(h_int, abs=1e-12)
    assert p.contact_area == pytest.approx(4.0, abs=1e-9)
    assert p.height == pytest.approx(1.0 + h_int, abs=1e-9)
    assert p.width == pytest.approx(2 * math.sqrt(2), abs=1e-9)
    assert p.volume == pytest.approx(4.0 * (1.0 + h_int), abs=1e-9)
    assert p.aspect_ratio == pytest.approx((1.0 + h_int) / (2 * math.sqrt(2)), abs=1e-9)


@settings(max_examples=30, deadline=None)
@given(beta=st.floats(0.0, 1.99), face=st.sampled_from(["111", "100", "-1-1-1", "010"]))
def test_interface_plane_sits_at_the_closed_form_height(beta, face):
    # Winterbottom (1967, from memory): h_int = h_free (1 - β/γ_facet). The vertices of
    # the interface face all lie on the plane n.x = h_int; tolerance 1e-9.
    free = _free()
    gamma_f = GAMMA["111"] if "1-1" in face or face == "111" else GAMMA["100"]
    p = winterbottom_shape(free, face, adhesion=beta * gamma_f)
    expected = gamma_f * (1 - beta)
    assert p.h_interface == pytest.approx(expected, abs=1e-12)
    poly = p.polyhedron
    iface = [f for f in range(poly.n_faces) if poly.form_labels[poly.form_ids[f]] == "interface"]
    plane = expected
    if p.regime == "free":  # a cut within the length tolerance of the facet: the facet
        assert beta < 1e-7
        plane = p.h_free
    assert len(iface) == 1
    loop = poly.faces[iface[0]]
    heights = poly.vertices[loop] @ p.normal
    assert heights == pytest.approx(np.full(len(loop), plane), abs=1e-9)
    # the substrate face's own facet is cut away; nothing of the particle lies beyond
    assert (poly.vertices @ p.normal).max() <= plane + 1e-9


def _all_planes():
    normals, dists = [], []
    for v in itertools.product((-1, 1), repeat=3):
        normals.append(np.array(v) / math.sqrt(3))
        dists.append(GAMMA["111"])
    for axis in range(3):
        for sign in (-1, 1):
            n = np.zeros(3)
            n[axis] = sign
            normals.append(n)
            dists.append(GAMMA["100"])
    return np.array(normals), np.array(dists)


@pytest.mark.parametrize("beta", [0.1, 0.6, 1.0, 1.4, 1.95])
def test_volume_and_areas_against_scipy_halfspace_intersection(beta):
    # Independent computation: the 14 cubic planes plus n.x <= h_int handed to
    # scipy.spatial.HalfspaceIntersection (interior point by linear programming),
    # volume and area from ConvexHull. Tolerance 1e-9 relative.
    p = winterbottom_shape(_free(), "111", adhesion=beta)
    normals, dists = _all_planes()
    n = np.ones(3) / math.sqrt(3)
    normals = np.vstack([normals, n])
    dists = np.append(dists, 1.0 - beta)
    norm = np.linalg.norm(normals, axis=1)
    lp = linprog(
        [0, 0, 0, -1],
        A_ub=np.hstack([normals, norm[:, None]]),
        b_ub=dists,
        bounds=[(None, None)] * 3 + [(0, None)],
    )
    hs = HalfspaceIntersection(np.hstack([normals, -dists[:, None]]), lp.x[:3])
    hull = ConvexHull(hs.intersections)
    assert p.volume == pytest.approx(hull.volume, rel=1e-9)
    assert float(p.polyhedron.area) == pytest.approx(hull.area, rel=1e-9)
    # contact area: the hull facets lying in the interface plane
    on_plane = np.abs(hull.equations[:, :3] @ n - 1) < 1e-9
    tri_area = 0.0
    for simplex in hull.simplices[on_plane]:
        a, b, c = hs.intersections[simplex]
        tri_area += 0.5 * np.linalg.norm(np.cross(b - a, c - a))
    assert p.contact_area == pytest.approx(tri_area, rel=1e-9)
    assert sum(f.area_fraction for f in p.forms) == pytest.approx(1.0, abs=1e-12)
    assert p.interface_fraction == pytest.approx(tri_area / hull.area, rel=1e-9)


def _total_energy(particle, beta):
    # sum_i γ_i A_i + (γ_int - γ_sub) A_int with γ_int - γ_sub = γ_facet - β, per V^(2/3)
    e = sum(f.energy * f.area for f in particle.forms[:-1])
    e += (particle.facet_energy - beta) * particle.forms[-1].area
    return e / particle.volume ** (2.0 / 3.0)


@pytest.mark.parametrize("beta", [0.3, 0.9, 1.5])
def test_winterbottom_height_minimises_the_surface_energy(beta):
    # The construction minimises total surface free energy at fixed volume
    # (Winterbottom 1967, from memory). Moving the cut away from h_int (by building the
    # shape for another β' and pricing it with the true β) must cost energy.
    free = _free()
    best = _total_energy(winterbottom_shape(free, "111", adhesion=beta), beta)
    for delta in (-0.2, -0.05, 0.05, 0.2):
        other = _total_energy(winterbottom_shape(free, "111", adhesion=beta + delta), beta)
        assert other > best + 1e-9 * best


def test_no_adhesion_gives_the_free_shape_on_its_facet():
    free = _free()
    p = winterbottom_shape(free, "111", adhesion=0.0)
    assert p.regime == "free"
    assert p.volume == pytest.approx(float(free.polyhedron.volume), rel=1e-12)
    assert p.h_interface == pytest.approx(p.h_free, abs=1e-12)
    facet = free.polyhedron.face_areas[
        [i for i, h in enumerate(free.polyhedron.hkl) if tuple(h) == (1, 1, 1)][0]
    ]
    assert p.contact_area == pytest.approx(facet, rel=1e-12)


def test_full_wetting_gives_a_film_and_beyond_is_refused():
    # centrosymmetric shape: β_wet = 2 γ_facet (the far (-1-1-1) facet at the same distance)
    free = _free()
    film = winterbottom_shape(free, "111", adhesion=2.0)
    assert film.regime == "film" and film.polyhedron is None
    assert film.wetting_adhesion == pytest.approx(2.0, abs=1e-12)
    assert film.height == 0.0
    with pytest.raises(InputError, match="past full wetting") as info:
        winterbottom_shape(free, "111", adhesion=2.2)
    assert "β_wet = 2 J/m²" in str(info.value)


def test_wetting_threshold_without_a_centre_of_symmetry():
    # class -43m: tetrahedra {111} (γ 1.0) and {-1-1-1} (γ 1.3, invented). On (111) the
    # far side is the (-1-1-1) facet at 1.3, so β_wet = γ(1 + 1.3/1.0) = 2.3 (closed form
    # of h_int = -h_W(-n)).
    xtal = Crystal.from_cell(4.0, crystal_class="-43m")
    free = wulff_shape(xtal, {"111": 1.0, "-1-1-1": 1.3})
    p = winterbottom_shape(free, "111", adhesion=1.0)
    assert p.wetting_adhesion == pytest.approx(2.3, abs=1e-9)
    assert winterbottom_shape(free, "111", adhesion=2.3).regime == "film"
    with pytest.raises(InputError, match="past full wetting"):
        winterbottom_shape(free, "111", adhesion=2.31)


def test_interface_and_substrate_energies_give_the_adhesion():
    # Dupré: β = γ_facet + γ_substrate - γ_interface = 1.0 + 0.8 - 1.2 = 0.6
    free = _free()
    a = winterbottom_shape(free, "111", interface_energy=1.2, substrate_energy=0.8)
    b = winterbottom_shape(free, "111", adhesion=0.6)
    assert a.adhesion == pytest.approx(0.6, abs=1e-12)
    assert a.volume == pytest.approx(b.volume, rel=1e-12)


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"adhesion": -0.1}, "is negative"),
        ({}, "give the adhesion energy"),
        ({"adhesion": 0.5, "substrate_energy": 1.0}, "give either"),
        ({"interface_energy": 1.0}, "give the adhesion energy"),
        ({"adhesion": float("inf")}, "finite number"),
    ],
)
def test_bad_substrate_input_is_one_clear_sentence(kwargs, message):
    with pytest.raises(HabitError, match=message) as info:
        winterbottom_shape(_free(), "111", **kwargs)
    assert str(info.value).endswith(".")


def test_substrate_face_outside_the_forms_and_non_energy_shapes_are_refused():
    with pytest.raises(InputError, match="belongs to none of the forms"):
        winterbottom_shape(_free(), "110", adhesion=0.5)
    drawn = wulff_shape(CUBIC, GAMMA, kind="distance")
    with pytest.raises(InputError, match="needs a Wulff shape built from surface energies"):
        winterbottom_shape(drawn, "111", adhesion=0.5)


def test_results_are_frozen():
    p = winterbottom_shape(_free(), "111", adhesion=0.5)
    with pytest.raises(AttributeError):
        p.height = 2.0
    with pytest.raises(ValueError):
        p.normal[0] = 1.0  # read-only array


@settings(max_examples=25, deadline=None)
@given(b1=st.floats(0.0, 1.95), b2=st.floats(0.0, 1.95))
def test_more_adhesion_gives_a_flatter_smaller_particle(b1, b2):
    # h_int decreases with β, so the cut removes more: volume and height never grow
    # (the cut shapes are nested); exact monotonicity up to 1e-12 relative.
    lo, hi = sorted((b1, b2))
    free = _free()
    p_lo = winterbottom_shape(free, "100", adhesion=lo * GAMMA["100"])
    p_hi = winterbottom_shape(free, "100", adhesion=hi * GAMMA["100"])
    assert p_hi.volume <= p_lo.volume * (1 + 1e-12)
    assert p_hi.height <= p_lo.height * (1 + 1e-12) + 1e-12
    assert p_lo.volume <= float(free.polyhedron.volume) * (1 + 1e-12)


def test_a_face_that_is_not_a_facet_touches_until_the_plane_cuts():
    # {110} at 1.5 is not on the {111}+{100} shape; the shape's extent along [110] is
    # h_W = max over vertices of n.v. Contact area 0 while h_int >= h_W, > 0 below it;
    # and β_wet = γ(1 + h_W(-n)/h_free) < 2γ because h_W(-n) = h_W < h_free (closed
    # form of the film condition h_int = -h_W(-n)).
    free = _free({"111": 1.0, "100": 1.1, "110": 1.5})
    n = np.array([1.0, 1.0, 0.0]) / math.sqrt(2)
    h_w = float((free.polyhedron.vertices @ n).max())
    beta_touch = 1.5 * (1 - h_w / 1.5)  # β at which h_int = h_W
    assert winterbottom_shape(free, "110", adhesion=0.9 * beta_touch).contact_area == 0.0
    assert winterbottom_shape(free, "110", adhesion=1.1 * beta_touch).contact_area > 0.0
    p = winterbottom_shape(free, "110", adhesion=1.0)
    assert p.wetting_adhesion == pytest.approx(1.5 * (1 + h_w / 1.5), rel=1e-12)
    assert p.wetting_adhesion < 2 * 1.5
