"""File output that is never left half-written."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from planner.errors import UserError


def write_atomically(path: str | os.PathLike, content: str | bytes) -> Path:
    """Write ``content`` to ``path`` through a temporary file in the same folder.

    The temporary file is renamed over the target only once it is complete, so a
    failure at any point leaves either the old file or no file, never a partial one.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise UserError(f"{target}: folder {folder} does not exist; create it first")
    data = content.encode("utf-8") if isinstance(content, str) else content
    fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    try:
        os.chmod(tmp_name, 0o666 & ~_current_umask())  # mkstemp makes it owner-only
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp_name, target)
    except BaseException:
        try:
            os.unlink(tmp_name)
        except FileNotFoundError:
            pass
        raise
    return target


def _current_umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
