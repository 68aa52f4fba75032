"""File output that is never left half-written and never lands on a file it must not touch.

Every file the program writes goes through :func:`write_atomically`, which follows the
:class:`WriteRules` of the run: the run's own inputs are never overwritten (compared by
resolved path and by device and inode, so symbolic and hard links count), and a file that
already exists is replaced only when the user said so (``--force``).
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from planner.errors import UserError


def _file_identity(path: Path) -> tuple[int, int] | None:
    """(device, inode) of the file ``path`` leads to, following links; None if there is none."""
    try:
        status = path.stat()
    except OSError:
        return None
    return (status.st_dev, status.st_ino)


@dataclass(frozen=True)
class WriteRules:
    """What one run may write.

    ``inputs`` are the files the run reads (scenario, element sets, pattern tables); ``force``
    allows replacing files that already exist. The rules are fixed when the run starts, so
    the inputs are compared as they were before anything was written.
    """

    input_paths: frozenset[Path] = frozenset()
    input_identities: frozenset[tuple[int, int]] = frozenset()
    force: bool = False

    @classmethod
    def for_run(cls, inputs: Iterable[str | os.PathLike | None], *, force: bool) -> WriteRules:
        """Rules protecting ``inputs`` (None entries are skipped)."""
        paths = [Path(p) for p in inputs if p is not None]
        resolved = frozenset(_resolved(p) for p in paths)
        identities = frozenset(i for i in (_file_identity(p) for p in paths) if i is not None)
        return cls(input_paths=resolved, input_identities=identities, force=force)

    def check(self, path: str | os.PathLike, option: str | None = None) -> None:
        """Refuse (UserError) writing ``path``: an input of the run, or an existing file without force."""
        target = Path(path)
        label = f"{option}: {target}" if option else str(target)
        identity = _file_identity(target)
        if _resolved(target) in self.input_paths or (identity is not None and identity in self.input_identities):
            raise UserError(f"{label}: is one of this run's input files; write the output somewhere else")
        if target.is_dir():
            raise UserError(f"{label}: is a folder; give the name of a file to write")
        if target.exists() and not target.is_file():  # a device, a pipe or a socket: renaming over it would replace it
            raise UserError(f"{label}: is not a regular file (a device, pipe or socket); give the name of a file to write")
        if not self.force and (target.exists() or target.is_symlink()):
            raise UserError(f"{label}: already exists; give --force to replace it, or choose another name")


REPLACE_ANY = WriteRules(force=True)
"""Rules for library callers that manage their own files (no inputs to protect, replace allowed)."""


def _resolved(path: Path) -> Path:
    try:
        return path.resolve()
    except (OSError, RuntimeError):  # a link loop: compare as written
        return Path(os.path.abspath(path))


def ensure_folder(folder: str | os.PathLike, option: str) -> Path:
    """Create ``folder`` (and its parents) for output; a filesystem problem is one UserError line."""
    path = Path(folder)
    if path.exists() and not path.is_dir():
        raise UserError(f"{option}: {path} exists and is not a folder")
    try:
        path.mkdir(parents=True, exist_ok=True)
    except FileExistsError:
        raise UserError(f"{option}: {path}: a part of this path is a file, not a folder") from None
    except NotADirectoryError:
        raise UserError(f"{option}: {path}: a part of this path is a file, not a folder") from None
    except OSError as exc:
        raise UserError(f"{option}: cannot create folder {path}: {exc.strerror or exc}") from None
    return path


def write_atomically(path: str | os.PathLike, content: str | bytes, *, rules: WriteRules) -> Path:
    """Write ``content`` to ``path`` through a temporary file in the same folder.

    ``rules`` are checked first (see :class:`WriteRules`). The temporary file is renamed over
    the target only once it is complete (and flushed to disk), so a failure at any point
    leaves either the old file or no file, never a partial one, and no temporary file behind.
    Problems the user can fix (a missing folder, a folder where the file should go, no
    permission, a full disk) raise :class:`planner.errors.UserError` with one line naming the
    file.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise UserError(f"{target}: folder {folder} does not exist; create it first")
    rules.check(target)
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
