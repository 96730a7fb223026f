"""Sample structures for the morphology, bond and substrate tests, built with pymatgen.

Cells: copper a = 3.615 Å, α-iron a = 2.8665 Å, fluorite a = 5.4626 Å, silicon
a = 5.431 Å, quartz a = 4.9133 Å, c = 5.4053 Å (values from memory; the tests check
closed forms in these cells, so the exact cell does not decide pass or fail).
Quartz atom positions: Si x = 0.4697; O 0.4135, 0.2669, 0.1191 (from memory, used only
for the space group's operations).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from pymatgen.core import Lattice, Structure

from habit.crystal import Crystal

FCC = np.array([[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]])
BCC = np.array([[0, 0, 0], [0.5, 0.5, 0.5]])

A_CU = 3.615
A_FE = 2.8665
A_CAF2 = 5.4626
A_SI = 5.431
A_QZ, C_QZ = 4.9133, 5.4053


@lru_cache
def copper() -> Crystal:
    s = Structure(Lattice.cubic(A_CU), ["Cu"] * 4, FCC)
    return Crystal.from_structure(s, name="copper")


@lru_cache
def iron() -> Crystal:
    s = Structure(Lattice.cubic(A_FE), ["Fe"] * 2, BCC)
    return Crystal.from_structure(s, name="alpha-iron")


@lru_cache
def fluorite() -> Crystal:
    # Ca on the fcc sites, F at the eight (±1/4, ±1/4, ±1/4) positions of each
    octants = np.array(
        [[x, y, z] for x in (0.25, 0.75) for y in (0.25, 0.75) for z in (0.25, 0.75)]
    )
    s = Structure(Lattice.cubic(A_CAF2), ["Ca"] * 4 + ["F"] * 8, np.vstack([FCC, octants]))
    return Crystal.from_structure(s, name="fluorite")


@lru_cache
def silicon() -> Crystal:
    s = Structure(Lattice.cubic(A_SI), ["Si"] * 8, np.vstack([FCC, FCC + 0.25]))
    return Crystal.from_structure(s, name="silicon")


@lru_cache
def quartz() -> Crystal:
    s = Structure.from_spacegroup(
        "P3_221",
        Lattice.hexagonal(A_QZ, C_QZ),
        ["Si", "O"],
        [[0.4697, 0, 0], [0.4135, 0.2669, 0.1191]],
    )
    return Crystal.from_structure(s, name="quartz")
