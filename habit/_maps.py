"""Private: shape maps over two form values with quadtree refinement (see habit.batch)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from habit._solve import PlaneSet, Progress, _present_mask, _region_name, solve_shapes
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = ["ShapeMap", "shape_map"]


@dataclass(frozen=True, slots=True)
class ShapeMap:
    """Shapes over a grid of two inputs, refined where the set of present forms changes.

    Attributes
    ----------
    x, y : (nx,), (ny,) float arrays
        The finest grid: values of the two inputs (J/m², or the unit of the inputs).
    x_form, y_form : int
        The forms whose values vary along x and y.
    regions : (ny, nx) int array
        Present-form set at each grid point as a bit mask (bit f: form f present). Points
        that were not computed take the value shared by the corners of their cell.
    computed : (ny, nx) bool array
        Points where a shape was actually computed.
    points : (M, 2) float array
        (x, y) of the computed points.
    point_regions : (M,) int array
    point_fractions : (M, F) float array
        Area fraction of each form at the computed points.
    point_volume : (M,) float array
    base : (F,) float array
        Values of all forms; those of ``x_form`` and ``y_form`` are replaced by the grid.
    planes : PlaneSet
    n_fallback : int
        Shapes recomputed with a hull.
    """

    x: NDArray[np.float64]
    y: NDArray[np.float64]
    x_form: int
    y_form: int
    regions: NDArray[np.int64]
    computed: NDArray[np.bool_]
    points: NDArray[np.float64]
    point_regions: NDArray[np.int64]
    point_fractions: NDArray[np.float64]
    point_volume: NDArray[np.float64]
    base: NDArray[np.float64]
    planes: PlaneSet
    n_fallback: int

    @property
    def n_shapes(self) -> int:
        """How many shapes were computed."""
        return int(self.points.shape[0])

    def region_names(self) -> dict[int, str]:
        """Bit mask -> name of the present-form set, for the masks on the map."""
        return {int(m): _region_name(self.planes, int(m)) for m in np.unique(self.regions)}

    def boundaries(self) -> NDArray[np.float64]:
        """Midpoints (K, 2) between neighbouring grid points in different regions."""
        out = []
        r = self.regions
        jj, ii = np.nonzero(r[:, 1:] != r[:, :-1])
        out.append(np.column_stack([(self.x[ii] + self.x[ii + 1]) / 2, self.y[jj]]))
        jj, ii = np.nonzero(r[1:, :] != r[:-1, :])
        out.append(np.column_stack([self.x[ii], (self.y[jj] + self.y[jj + 1]) / 2]))
        return np.vstack(out)


def _axis(planes: PlaneSet, spec: Any, name: str) -> tuple[int, float, float]:
    try:
        form, lo, hi = spec
        lo, hi = float(lo), float(hi)
    except (TypeError, ValueError):
        raise InputError(
            f"{name} must be (form, low, high), e.g. ('110', 0.6, 1.5); got {spec!r}."
        ) from None
    if not (0 < lo < hi and np.isfinite(hi)):
        raise InputError(f"{name} needs 0 < low < high (positive values); got {lo} and {hi}.")
    return planes.form_index(form), lo, hi


def shape_map(
    planes: PlaneSet,
    base: ArrayLike,
    x: Any,
    y: Any,
    *,
    size: int | tuple[int, int] = 17,
    levels: int = 3,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> ShapeMap:
    """Map the shape over two inputs, refining the grid only near region boundaries.

    A coarse grid of ``size`` points per axis is computed first. A cell whose four corners
    do not all have the same set of present forms is cut into four, and the new corner
    points are computed; this repeats ``levels`` times. The finest grid thus has
    ``(size - 1) * 2**levels + 1`` points per axis, but shapes are computed only along
    the boundaries. A region smaller than a coarse cell that touches none of its corners
    can be missed: use a finer coarse grid when that matters.

    Parameters
    ----------
    planes : PlaneSet
        From :func:`crystal_planes` or :func:`prepare_planes`.
    base : (F,) array_like
        Value (energy, distance) of every form; the two mapped forms' values are ignored.
    x, y : (form, low, high)
        The form varied along each axis (number or label such as '110') and its range.
        For a ratio map keep a third form's base value at 1.
    size : int or (nx, ny)
        Points per axis of the coarse grid (>= 2).
    levels : int
        Refinement levels (0: the plain grid).
    tol : Tolerances
    progress : callable, optional
        Called with the number of shapes computed so far.
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    ShapeMap

    Examples
    --------
    >>> import numpy as np
    >>> from habit.batch import prepare_planes, shape_map
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> octa = np.array([[a, b, c] for a in (1, -1) for b in (1, -1) for c in (1, -1)])
    >>> planes = prepare_planes(np.vstack([cube, octa / 3 ** 0.5]), forms=[0] * 6 + [1] * 8)
    >>> m = shape_map(planes, [1.0, 1.0], x=(1, 0.3, 2.0), y=(0, 0.9, 1.1), size=5, levels=2)
    >>> sorted(m.region_names().values())
    ['form 1', 'form 1 + form 2', 'form 2']
    """
    g0 = np.asarray(base, dtype=float).reshape(-1)
    if g0.shape != (planes.n_forms,):
        raise InputError(f"base needs one value per form ({planes.n_forms}), got {g0.shape}.")
    xf, xlo, xhi = _axis(planes, x, "x")
    yf, ylo, yhi = _axis(planes, y, "y")
    if xf == yf:
        raise InputError("x and y must vary two different forms.")
    nx0, ny0 = (size, size) if np.isscalar(size) else size  # type: ignore[misc]
    nx0, ny0 = int(nx0), int(ny0)  # type: ignore[arg-type]
    if nx0 < 2 or ny0 < 2 or levels < 0:
        raise InputError("size needs at least 2 points per axis and levels must be >= 0.")
    step = 2**levels
    nx, ny = (nx0 - 1) * step + 1, (ny0 - 1) * step + 1
    xs, ys = np.linspace(xlo, xhi, nx), np.linspace(ylo, yhi, ny)
    regions = np.full((ny, nx), -1, dtype=np.int64)
    computed = np.zeros((ny, nx), dtype=bool)
    pts: list[NDArray[np.float64]] = []
    regs: list[NDArray[np.int64]] = []
    fracs: list[NDArray[np.float64]] = []
    vols: list[NDArray[np.float64]] = []
    n_fallback = 0
    done = 0

    def compute(ii: NDArray[np.int64], jj: NDArray[np.int64]) -> None:
        nonlocal n_fallback, done
        keep = ~computed[jj, ii]
        ii, jj = ii[keep], jj[keep]
        if len(ii) == 0:
            return
        values = np.tile(g0, (len(ii), 1))  # (M, F)
        values[:, xf] = xs[ii]
        values[:, yf] = ys[jj]
        batch = solve_shapes(
            planes, planes.expand(values), tol=tol, scheduler=scheduler, workers=workers
        )
        mask = _present_mask(batch)
        regions[jj, ii] = mask
        computed[jj, ii] = True
        pts.append(values[:, [xf, yf]])
        regs.append(mask)
        fracs.append(batch.form_fractions)
        vols.append(batch.volume)
        n_fallback += batch.n_fallback
        done += len(ii)
        if progress is not None:
            progress(done)

    ci, cj = np.meshgrid(np.arange(0, nx, step), np.arange(0, ny, step))
    compute(ci.ravel(), cj.ravel())
    cells = np.column_stack([ci[:-1, :-1].ravel(), cj[:-1, :-1].ravel()])  # (C, 2) corners
    s = step
    while len(cells):
        i0, j0 = cells[:, 0], cells[:, 1]
        corners = np.stack(
            [regions[j0, i0], regions[j0, i0 + s], regions[j0 + s, i0], regions[j0 + s, i0 + s]]
        )  # (4, C)
        mixed = np.any(corners != corners[0], axis=0)
        for a, b, r in zip(i0[~mixed], j0[~mixed], corners[0, ~mixed], strict=True):
            block = regions[b : b + s + 1, a : a + s + 1]
            block[~computed[b : b + s + 1, a : a + s + 1]] = r
        if s == 1:
            break
        h = s // 2
        split = cells[mixed]
        a, b = split[:, 0], split[:, 1]
        new_i = np.concatenate([a + h, a, a + h, a + s, a + h])
        new_j = np.concatenate([b, b + h, b + h, b + h, b + s])
        order = np.unique(new_j * nx + new_i)
        compute(order % nx, order // nx)
        cells = np.concatenate([split, split + [h, 0], split + [0, h], split + [h, h]])
        s = h
    points = np.vstack(pts)
    out = ShapeMap(
        x=xs,
        y=ys,
        x_form=xf,
        y_form=yf,
        regions=regions,
        computed=computed,
        points=points,
        point_regions=np.concatenate(regs),
        point_fractions=np.vstack(fracs),
        point_volume=np.concatenate(vols),
        base=g0,
        planes=planes,
        n_fallback=n_fallback,
    )
    for arr in (out.x, out.y, out.regions, out.computed, out.points, out.point_regions,
                out.point_fractions, out.point_volume, out.base):  # fmt: skip
        arr.setflags(write=False)
    return out
