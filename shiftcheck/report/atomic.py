"""The one way shiftcheck writes a file: atomically, with the usual permissions, never over an input.

* :func:`atomic_write_text` / :func:`atomic_target`: a temporary file in the target folder,
  renamed into place only when complete, created with mode ``0666 & ~umask`` (what ``open``
  would give; ``mkstemp`` alone gives 0600), removed on any error or signal.
* :func:`check_output_file`: before any work, refuse a target that is a directory, that lies in
  a missing or read-only folder, or that is - after resolving symlinks and ``..`` - one of the
  input files.
"""
from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

from ..errors import OutputError

__all__ = ["umask", "atomic_write_text", "atomic_target", "check_output_file", "same_file"]


def umask() -> int:
    """The process umask (read without changing it for longer than the call)."""
    mask = os.umask(0)
    os.umask(mask)
    return mask


def same_file(a, b) -> bool:
    """True when two paths name the same file after symlinks and ``..`` (or the same inode)."""
    try:
        pa, pb = Path(a).resolve(), Path(b).resolve()
    except (OSError, RuntimeError):
        return False
    if pa == pb:
        return True
    try:
        return os.path.samefile(pa, pb)
    except OSError:
        return False


def check_output_file(path, inputs=(), what: str = "output file") -> Path:
    """Validate an output file path before any work; returns it as a Path.

    Raises
    ------
    OutputError
        The path is a directory, its folder is missing or not writable, or it is one of
        ``inputs`` (after resolving symlinks and ``..``).
    """
    p = Path(path).expanduser()
    if p.is_dir():
        raise OutputError(f"is a directory, expected an {what} name", path=str(path))
    parent = p.absolute().parent
    if not parent.is_dir():
        raise OutputError(f"folder of the {what} does not exist", path=str(path))
    if not os.access(parent, os.W_OK | os.X_OK):
        raise OutputError(f"folder of the {what} is not writable", path=str(path))
    for inp in inputs:
        if inp is not None and same_file(p, inp):
            raise OutputError(f"refusing to write the {what} over an input file", path=str(path))
    return p


@contextlib.contextmanager
def atomic_target(path, suffix: str = ""):
    """Yield a temporary path beside ``path``; it replaces ``path`` when the block succeeds."""
    path = Path(path)
    try:
        fd, name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=suffix or ".tmp",
                                    dir=str(path.absolute().parent))
    except OSError as exc:
        raise OutputError(f"cannot write here ({exc.strerror or exc})", path=str(path)) from None
    os.close(fd)
    tmp = Path(name)
    try:
        os.chmod(tmp, 0o666 & ~umask())
        yield tmp
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise


def atomic_write_text(path, text: str) -> Path:
    """Write ``text`` (UTF-8, line ends as given) to ``path`` atomically; returns the path."""
    with atomic_target(path) as tmp:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
    return Path(path)
