"""Output directories written all at once: a temporary sibling directory, then renamed into place.

Rules: an existing non-empty OUTDIR is refused unless ``force``; with ``force`` each new file
replaces its namesake in OUTDIR (other files there are left alone). OUTDIR may never contain or
be an input file's folder when it would be replaced, and is never created beside the inputs by
default (the caller must name it). On any error the temporary directory is removed, so no
half-written output is left and a pre-existing OUTDIR is untouched.
"""
from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from pathlib import Path

from ..errors import OutputError

__all__ = ["check_outdir", "staged_outdir"]


def check_outdir(outdir: str | os.PathLike, force: bool = False, inputs=()) -> Path:
    """Validate OUTDIR before any work is done; returns its absolute path.

    Raises
    ------
    OutputError
        OUTDIR is a file; it is non-empty and ``force`` is false; an input lies inside it and
        ``force`` is true (replacing files there could destroy inputs); its parent is missing.
    """
    out = Path(outdir).expanduser().absolute()
    if out.exists() and not out.is_dir():
        raise OutputError("output path exists and is not a directory", path=str(out))
    if not out.parent.is_dir():
        raise OutputError("parent folder of the output directory does not exist", path=str(out))
    if out.is_dir() and any(out.iterdir()):
        if not force:
            raise OutputError("output directory is not empty (use --force to write into it)",
                              path=str(out))
        for p in inputs:
            try:
                Path(p).absolute().relative_to(out)
            except ValueError:
                continue
            raise OutputError(f"refusing to write into a folder that holds an input ({Path(p).name})",
                              path=str(out))
    return out


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


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
        os.chmod(tmp, 0o777 & ~_umask())     # mkdtemp makes 0700; give the usual permissions
        yield tmp
        if out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        if not out.exists():
            os.replace(tmp, out)
        else:                      # --force into a non-empty directory: file by file
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
