"""Reading an input file as text, the same way for every reader: gzip unpacked, and missing,
empty and binary files refused with a one-line :class:`~shiftcheck.errors.InputError`."""
from __future__ import annotations

import gzip
import zlib
from pathlib import Path

from ..errors import InputError

__all__ = ["read_text_file"]

# control characters that do not occur in text files (tab, LF, CR and form feed are allowed)
_CONTROL = bytes(list(range(0, 9)) + [11] + list(range(14, 32)))


def read_text_file(path, kind: str) -> str:
    """Contents of ``path`` as text with Unix line ends.

    Parameters
    ----------
    path : str or Path
    kind : str
        What the file should be, for messages (e.g. "shift file", "PDB or mmCIF file").

    Raises
    ------
    InputError
        Missing file, directory, unreadable, broken gzip, empty, or binary content (NUL bytes,
        more than 1 % control characters in the first 64 KiB, or neither UTF-8 nor Latin-1).
    """
    p = Path(path)
    if not p.exists():
        raise InputError("file not found", path=path)
    if p.is_dir():
        raise InputError(f"is a directory, expected a {kind}", path=path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise InputError(f"cannot read file ({exc.strerror or exc})", path=path) from None
    if raw[:2] == b"\x1f\x8b":
        try:
            raw = gzip.decompress(raw)
        except (OSError, EOFError, zlib.error) as exc:
            raise InputError(f"broken gzip data ({exc})", path=path) from None
    if not raw.strip():
        raise InputError("file is empty", path=path)
    head = raw[:65536]
    if b"\x00" in head or len(head) - len(head.translate(None, _CONTROL)) > 0.01 * len(head):
        raise InputError(f"binary content, expected a {kind}", path=path)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        text = raw.decode("latin-1")
        bad = sum(1 for c in text if 0x7F <= ord(c) < 0xA0)
        if bad > max(2, len(text) // 100):
            raise InputError(f"binary content (neither UTF-8 nor Latin-1 text), expected a {kind}",
                             path=path) from None
    return text.lstrip("\ufeff").replace("\r\n", "\n").replace("\r", "\n")   # BOM, CRLF
