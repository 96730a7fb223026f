"""Figures. The only package in habit that imports matplotlib.

One module per topic; each imports matplotlib inside its functions, so importing this
package costs nothing. Every ``plot_*`` function takes ``ax=None``, forwards ``**kwargs``
to matplotlib, returns the artists it made and never calls ``show()``.
"""

from __future__ import annotations

import os
from typing import Any

__all__ = ["save_figure"]


def save_figure(fig: Any, path: str | os.PathLike[str], **kwargs: Any) -> None:
    """Save a figure to PNG or SVG (by the file's suffix) atomically, then close it.

    Nothing half-written is left at ``path`` if saving fails.
    """
    import contextlib
    import tempfile
    from pathlib import Path

    import matplotlib.pyplot as plt

    from habit.errors import InputError

    target = Path(path)
    fmt = target.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg", "pdf"):
        raise InputError(f"a figure is written as .png, .svg or .pdf; got {target.name!r}.")
    if not (target.parent if str(target.parent) else Path(".")).is_dir():
        raise InputError(f"cannot write {target}: its folder does not exist.")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    try:
        kwargs.setdefault("dpi", 150)
        fig.savefig(tmp, format=fmt, **kwargs)
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise
    finally:
        plt.close(fig)
