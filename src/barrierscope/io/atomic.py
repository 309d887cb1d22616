"""Outputs appear complete or not at all.

Everything barrierscope writes goes to a temporary file in the destination folder and is
renamed over the final name only when it is complete (``os.replace`` is atomic on POSIX
within one file system), so a run killed at any moment leaves no partial file under the
final name.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


@contextlib.contextmanager
def atomic_path(final: str | os.PathLike, suffix: str | None = None):
    """Yield a temporary path beside ``final``; on success rename it to ``final``."""
    final = Path(final)
    final.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{final.name}.", suffix=suffix or ".part", dir=final.parent)
    os.close(fd)
    try:
        yield Path(tmp)
        # mkstemp makes the file private (0600); give it the permissions of a normal new file.
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, final)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def write_text_atomic(final: str | os.PathLike, text: str, encoding: str = "utf-8") -> None:
    with atomic_path(final) as tmp:
        with open(tmp, "w", encoding=encoding) as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())


def write_bytes_atomic(final: str | os.PathLike, data: bytes) -> None:
    with atomic_path(final) as tmp:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
