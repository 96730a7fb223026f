"""Figures. The only package in habit that imports matplotlib.

One module per topic; each imports matplotlib inside its functions, so importing this
package costs nothing. Every ``plot_*`` function takes ``ax=None``, forwards ``**kwargs``
to matplotlib, returns the artists it made and never calls ``show()``.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

__all__ = ["save_figure"]


def save_figure(fig: Any, path: str | os.PathLike[str], *, dpi: float = 200.0) -> Path:
    """Save a figure as PNG, SVG or PDF (by the file suffix), atomically.

    The figure is rendered into a temporary file beside ``path`` and moved into place
    with ``os.replace``, so a failure never leaves a partial file.

    Parameters
    ----------
    fig : matplotlib Figure
        The figure.
    path : str or path-like
        Target; suffix ``.png``, ``.svg`` or ``.pdf``.
    dpi : float
        Resolution for PNG, dots per inch.

    Returns
    -------
    pathlib.Path

    Raises
    ------
    FileFormatError
        Unknown suffix or missing folder.
    """
    import sys

    from habit._files import replacing
    from habit.errors import FileFormatError

    target = Path(path)
    fmt = target.suffix.lower().lstrip(".")
    if fmt not in {"png", "svg", "pdf"}:
        raise FileFormatError(
            f"cannot save a figure as {target.name!r}: use a .png, .svg or .pdf file name."
        )
    with replacing(target) as tmp:
        fig.savefig(tmp, format=fmt, dpi=dpi, bbox_inches="tight")
    pyplot = sys.modules.get("matplotlib.pyplot")
    if pyplot is not None:  # figures made through pyplot are registered there; free them
        pyplot.close(fig)
    return target
