"""Atomic file writes: a temporary file in the target's folder, then a rename (private)."""

import contextlib
import os
import tempfile
from pathlib import Path

__all__ = ["atomic_path", "write_text_atomic"]


def _usual_mode(tmp, path):
    """Give the temporary file the mode a plain ``open()`` would (or the replaced file's)."""
    try:
        mode = os.stat(path).st_mode & 0o777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        mode = 0o666 & ~umask
    os.chmod(tmp, mode)


@contextlib.contextmanager
def atomic_path(path):
    """Yield a temporary path next to ``path``; on success rename it over ``path``.

    On any error the temporary file is removed and ``path`` is left as it was, so a
    failed write never leaves a half-written file.
    """
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
    os.close(fd)
    try:
        _usual_mode(tmp, path)
        yield tmp
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def write_text_atomic(path, text):
    """Write ``text`` (UTF-8) to ``path`` atomically (fsync before the rename)."""
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
