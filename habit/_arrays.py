"""Private: read-only arrays for the frozen result objects."""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["readonly"]


def readonly(a: Any, dtype: Any = float) -> Any:
    """Copy ``a`` into a new array of ``dtype`` that cannot be written to.

    Examples
    --------
    >>> r = readonly([1, 2])
    >>> r.flags.writeable, r.dtype.name
    (False, 'float64')
    """
    arr = np.array(a, dtype=dtype)
    arr.setflags(write=False)
    return arr
