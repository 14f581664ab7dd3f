"""Atomic writes: the written file gets ordinary permissions, not the temporary file's 0600."""

import os
import stat

from garnav.atomic import write_text_atomic


def test_written_file_has_umask_permissions(tmp_path):
    old = os.umask(0o022)
    try:
        path = write_text_atomic(tmp_path / "out.txt", "hello\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644  # 0666 & ~0022, as open() would give
    assert path.read_text() == "hello\n"
    assert [p.name for p in tmp_path.iterdir()] == ["out.txt"]  # no temporary file left
