"""File output that is never left half-written."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from planner.errors import UserError


def write_atomically(path: str | os.PathLike, content: str | bytes) -> Path:
    """Write ``content`` to ``path`` through a temporary file in the same folder.

    The temporary file is renamed over the target only once it is complete (and flushed
    to disk), so a failure at any point leaves either the old file or no file, never a
    partial one, and no temporary file behind. Problems the user can fix (a missing
    folder, a folder where the file should go, no permission, a full disk) raise
    :class:`planner.errors.UserError` with one line naming the file.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise UserError(f"{target}: folder {folder} does not exist; create it first")
    if target.is_dir():
        raise UserError(f"{target}: is a folder; give the name of a file to write")
    data = content.encode("utf-8") if isinstance(content, str) else content
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise UserError(f"{target}: cannot write in folder {folder}: {exc.strerror or exc}") from None
    try:
        with os.fdopen(fd, "wb") as handle:  # the handle owns (and closes) the descriptor
            os.chmod(tmp_name, 0o666 & ~_current_umask())  # mkstemp makes it owner-only
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp_name, target)
    except BaseException as exc:
        try:
            os.unlink(tmp_name)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise UserError(f"{target}: cannot write: {exc.strerror or exc}") from None
        raise
    return target


def _current_umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
