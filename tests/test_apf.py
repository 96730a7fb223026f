"""Atomic packing fractions against closed forms and a hand computation."""

from __future__ import annotations

import math

import numpy as np
import pytest
from pymatgen.core import Lattice, Structure

from habit.apf import atomic_packing_fraction
from habit.errors import InputError, UnknownSymbolError


def cubic(a, species, coords):
    return Structure(Lattice.cubic(a), species, coords)


FCC = [[0, 0, 0], [0.5, 0.5, 0], [0.5, 0, 0.5], [0, 0.5, 0.5]]
DIAMOND = FCC + [[x + 0.25, y + 0.25, z + 0.25] for x, y, z in FCC]


def hcp(a, c_over_a, element="Mg"):
    lattice = Lattice.hexagonal(a, a * c_over_a)
    return Structure(lattice, [element] * 2, [[1 / 3, 2 / 3, 0.25], [2 / 3, 1 / 3, 0.75]])


# Touching spheres of radius half the nearest-neighbour distance; closed forms are
# textbook results (e.g. Kittel, Introduction to Solid State Physics, ch. 1; common
# practice), checked to 1e-9. Lattice constants only set the scale (from memory).
CLOSED_FORMS = [
    pytest.param(cubic(3.35, ["Po"], [[0, 0, 0]]), math.pi / 6, id="simple cubic pi/6"),
    pytest.param(
        cubic(2.8665, ["Fe", "Fe"], [[0, 0, 0], [0.5, 0.5, 0.5]]),
        math.pi * math.sqrt(3) / 8,
        id="bcc pi*sqrt3/8",
    ),
    pytest.param(cubic(3.615, ["Cu"] * 4, FCC), math.pi / (3 * math.sqrt(2)), id="fcc"),
    pytest.param(hcp(3.21, math.sqrt(8 / 3)), math.pi / (3 * math.sqrt(2)), id="hcp ideal"),
    pytest.param(cubic(5.431, ["Si"] * 8, DIAMOND), math.pi * math.sqrt(3) / 16, id="diamond"),
    # hcp with c/a > ideal touches in the basal plane, r = a/2: APF = 2π/(3√3 (c/a))
    # (closed form derived from V = (√3/2) a² c, two atoms); zinc-like c/a = 1.856
    pytest.param(hcp(2.665, 1.856, "Zn"), 2 * math.pi / (3 * math.sqrt(3) * 1.856), id="hcp Zn"),
]


@pytest.mark.parametrize(("structure", "expected"), CLOSED_FORMS)
def test_contact_packing_fraction_closed_forms(structure, expected):
    result = atomic_packing_fraction(structure, radii="contact")
    assert result.fraction == pytest.approx(expected, abs=1e-9)
    assert result.site_fractions.sum() == pytest.approx(result.fraction, rel=1e-12)
    assert result.overlaps == ()  # touching is not overlapping


def test_ionic_periclase_with_shannon_radii_by_hand():
    # periclase MgO, rock-salt type, a = 4.212 Å (Wyckoff 1963, from memory).
    # Shannon (1976) Table 1 effective ionic radii, six-fold: Mg2+ 0.72 Å, O2- 1.40 Å.
    a = 4.212
    mg = [[0, 0, 0], [0.5, 0.5, 0], [0.5, 0, 0.5], [0, 0.5, 0.5]]
    o = [[x + 0.5, y, z] for x, y, z in mg]
    structure = Structure(Lattice.cubic(a), ["Mg2+"] * 4 + ["O2-"] * 4, mg + o)
    result = atomic_packing_fraction(structure, radii="ionic")
    hand = 4 * (4 / 3) * math.pi * (0.72**3 + 1.40**3) / a**3  # = 0.6860
    assert result.fraction == pytest.approx(hand, rel=1e-9)
    assert sorted(set(result.coordination.tolist())) == [6]
    assert sorted(set(np.round(result.radii, 2).tolist())) == [0.72, 1.40]
    # 0.72 + 1.40 = 2.12 Å > a/2 = 2.106 Å: the ions overlap by 0.014 Å and this is reported
    assert result.overlaps
    assert all(ov.radius_sum > ov.distance for ov in result.overlaps)


def test_user_radii_and_per_site_contributions():
    structure = cubic(4.0, ["Cu"] * 4, FCC)
    result = atomic_packing_fraction(structure, radii={"Cu": 1.0})
    assert result.fraction == pytest.approx(4 * 4 / 3 * math.pi / 64, rel=1e-12)
    assert np.allclose(result.site_fractions, result.fraction / 4)
    big = atomic_packing_fraction(structure, radii={"Cu": 1.6})  # 3.2 Å > 2.828 Å contact
    assert big.overlaps


def test_bad_radius_inputs():
    structure = cubic(4.0, ["Cu"] * 4, FCC)
    with pytest.raises(UnknownSymbolError):
        atomic_packing_fraction(structure, radii="magic")
    with pytest.raises(InputError):
        atomic_packing_fraction(structure, radii={"Fe": 1.0})
    with pytest.raises(InputError):
        atomic_packing_fraction(structure, radii="ionic")  # no oxidation states
