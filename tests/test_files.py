"""Files are written whole or not at all, with the usual permissions."""

from __future__ import annotations

import os

import pytest

from habit._files import default_mode, replacing
from habit.errors import FileFormatError


def test_written_file_gets_the_permissions_of_a_new_file(tmp_path):
    target = tmp_path / "out.txt"
    with replacing(target) as tmp:
        tmp.write_text("data")
    assert target.read_text() == "data"
    # a newly created file gets 0o666 less the umask (POSIX open(2)); mkstemp's 0o600
    # must not leak through
    mask = os.umask(0)
    os.umask(mask)
    assert target.stat().st_mode & 0o777 == 0o666 & ~mask == default_mode()


def test_failure_leaves_nothing_behind(tmp_path):
    target = tmp_path / "out.txt"
    with pytest.raises(RuntimeError), replacing(target) as tmp:
        tmp.write_text("half")
        raise RuntimeError("stop")
    assert list(tmp_path.iterdir()) == []


def test_missing_folder_is_one_sentence(tmp_path):
    with pytest.raises(FileFormatError, match="does not exist"), replacing(tmp_path / "no" / "x"):
        pass
