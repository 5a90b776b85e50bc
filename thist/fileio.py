"""Atomic file output: write to a temporary file in the target folder, then rename.

A failure while writing never leaves a half-written file and never destroys the
previous good one.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import IO


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _publish(tmp: str, path: Path) -> None:
    """Give the temporary file ordinary permissions (mkstemp makes it 0600), then rename."""
    os.chmod(tmp, 0o666 & ~_umask())
    os.replace(tmp, path)


@contextlib.contextmanager
def atomic_open(
    path: str | Path, mode: str = "w", encoding: str | None = "utf-8", newline: str | None = None
) -> Iterator[IO]:
    """Open a temporary file beside ``path``; rename it onto ``path`` on success.

    Parameters
    ----------
    path : str or Path
        Final file name.
    mode : {"w", "wb"}
        Text or binary.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        kwargs = {} if "b" in mode else {"encoding": encoding, "newline": newline}
        with os.fdopen(fd, mode, **kwargs) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())
        _publish(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def write_text(path: str | Path, text: str) -> None:
    """Write ``text`` to ``path`` atomically (UTF-8)."""
    with atomic_open(path, "w") as fh:
        fh.write(text)


def write_with(path: str | Path, writer: Callable[[str], None]) -> None:
    """Let ``writer(tmp_path)`` produce a file, then rename it onto ``path``.

    For libraries that want a file name rather than a handle (PDF, PNG).
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        writer(tmp)
        _publish(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
