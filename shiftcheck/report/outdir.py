"""Output directories written all at once: a temporary sibling directory, then renamed into place.

Rules: an existing non-empty OUTDIR is refused unless ``force``; with ``force`` the whole previous
output is replaced: the files a run writes (:data:`OUTPUT_NAMES`: tables, report, plots/) are
removed first, so no stale report or plot survives a ``--no-report`` run; other files there are
left alone. Paths are compared after resolving symlinks and ``..``: OUTDIR may never hold an
input file when it would be written into, nor be an input file. A missing or read-only parent
folder is refused before any work. On any error (or signal, see :mod:`shiftcheck.cli`) the
temporary directory is removed, so no half-written output is left and a pre-existing OUTDIR is
untouched.
"""
from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from pathlib import Path

from ..errors import OutputError
from .atomic import umask

__all__ = ["check_outdir", "staged_outdir", "OUTPUT_NAMES"]

#: What a score run writes into OUTDIR (``--force`` removes these before writing anew).
OUTPUT_NAMES = ("ranking.csv", "residues.csv", "summary.json", "shifts_corrected.str", "report.pdf",
                "report.html", "plots")


def check_outdir(outdir: str | os.PathLike, force: bool = False, inputs=()) -> Path:
    """Validate OUTDIR before any work is done; returns its absolute path.

    Raises
    ------
    OutputError
        OUTDIR is a file; it is non-empty and ``force`` is false; an input lies inside it and
        ``force`` is true (replacing files there could destroy inputs); its parent is missing.
    """
    out = Path(outdir).expanduser().resolve()
    if out.exists() and not out.is_dir():
        raise OutputError("output path exists and is not a directory", path=str(outdir))
    if not out.parent.is_dir():
        raise OutputError("parent folder of the output directory does not exist", path=str(outdir))
    if not os.access(out.parent, os.W_OK | os.X_OK):
        raise OutputError("parent folder of the output directory is not writable", path=str(outdir))
    if out.is_dir() and not os.access(out, os.W_OK | os.X_OK):
        raise OutputError("output directory is not writable", path=str(outdir))
    if out.is_dir() and any(out.iterdir()):
        if not force:
            raise OutputError("output directory is not empty (use --force to write into it)",
                              path=str(outdir))
        for p in inputs:
            if p is None:
                continue
            try:
                Path(p).resolve().relative_to(out)
            except (ValueError, OSError):
                continue
            raise OutputError(f"refusing to write into a folder that holds an input ({Path(p).name})",
                              path=str(outdir))
    return out


@contextlib.contextmanager
def staged_outdir(outdir: str | os.PathLike, force: bool = False, inputs=()):
    """Context manager yielding a temporary directory that becomes OUTDIR on success.

    Examples
    --------
    >>> with staged_outdir("results") as tmp:          # doctest: +SKIP
    ...     (tmp / "ranking.csv").write_text("...")
    """
    out = check_outdir(outdir, force, inputs)
    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.tmp-", dir=str(out.parent)))
    try:
        os.chmod(tmp, 0o777 & ~umask())     # mkdtemp makes 0700; give the usual permissions
        yield tmp
        if out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        if not out.exists():
            os.replace(tmp, out)
        else:                      # --force: the previous run's outputs go, then file by file
            for name in OUTPUT_NAMES:
                old = out / name
                if old.is_dir() and not old.is_symlink():
                    shutil.rmtree(old)
                elif old.exists() or old.is_symlink():
                    old.unlink()
            for p in sorted(tmp.rglob("*"), key=lambda x: len(x.parts)):
                dest = out / p.relative_to(tmp)
                if p.is_dir():
                    dest.mkdir(exist_ok=True)
                else:
                    os.replace(p, dest)
            shutil.rmtree(tmp, ignore_errors=True)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
