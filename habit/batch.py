"""Many Wulff shapes at once: batches of energy sets, shape maps, Monte Carlo, many crystals.

* :func:`solve_shapes` -- one plane set, many energy vectors: the area of every face, the
  volume, the faces present and every form's area fraction, by clipping the lines where
  pairs of planes meet (vectorised over shapes, reduced by symmetry), with a convex hull
  per shape as fallback; :func:`prepare_planes` / :func:`crystal_planes` build the plane set.
* :func:`shape_map` -- which forms show over a grid of two form values, refined near the
  boundaries.
* :func:`sample_shapes` -- Monte Carlo over uncertain form values, with intervals.
* :func:`run_batch` -- a folder of crystal files or a CSV of energy sets to one results
  table, written row by row and restartable.

Long work runs in-process, in local processes or on a dask cluster (``scheduler=``); the
numbers do not depend on where. Lengths are in the unit of the energies read as lengths
(a face of energy ``gamma`` J/m² lies at central distance ``gamma``), so areas and volumes
are in that unit squared and cubed; fractions are unitless.
"""

from __future__ import annotations

from habit._maps import ShapeMap, shape_map
from habit._runs import BatchReport, run_batch
from habit._sampling import SAMPLE_CHUNK, SampleSummary, sample_shapes
from habit._solve import PlaneSet, ShapeBatch, crystal_planes, prepare_planes, solve_shapes

__all__ = [
    "PlaneSet",
    "ShapeBatch",
    "ShapeMap",
    "SampleSummary",
    "BatchReport",
    "prepare_planes",
    "solve_shapes",
    "crystal_planes",
    "shape_map",
    "sample_shapes",
    "run_batch",
    "SAMPLE_CHUNK",
]
