"""Writing files so that nothing half-written is ever left behind.

Every file habit writes goes through :func:`replacing`: the content is written to a
temporary file beside the target, given the permissions a newly created file would get
(``0o666`` less the process umask), and moved into place with ``os.replace`` only when
writing succeeded. On any error the temporary file is removed and the target is left as
it was.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path

from habit.errors import FileFormatError

__all__ = ["replacing", "default_mode"]


def default_mode() -> int:
    """Permissions of a newly created file under the current umask (e.g. 0o644)."""
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


@contextlib.contextmanager
def replacing(path: str | os.PathLike[str]) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; move it onto ``path`` if the block succeeds.

    Raises
    ------
    FileFormatError
        If the folder does not exist or the file cannot be created.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise FileFormatError(f"cannot write {target}: folder {folder} does not exist.")
    try:
        fd, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=folder)
    except OSError as exc:
        raise FileFormatError(f"cannot write {target}: {exc.strerror}.") from None
    os.close(fd)
    tmp = Path(name)
    try:
        yield tmp
        os.chmod(tmp, default_mode())
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            tmp.unlink()
        raise
