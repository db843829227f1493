"""Generic STAR syntax reader (tokenizer and parser), for NMR-STAR 2.1 and 3.x alike.

pynmrstar refuses NMR-STAR 2.1 files, which are still common (older BMRB entries, files
passed between labs), so the STAR syntax is read here from scratch, following the STAR rules
of Hall (1991), J. Chem. Inf. Comput. Sci. 31:326 and Hall & Spadaccini (1994) 34:505:

* ``#`` starts a comment where a token could start; a comment runs to the end of the line;
* ``'...'`` and ``"..."`` quote a value; a quote closes only when whitespace or the end of
  the line follows it (so ``'it's'`` is one value ``it's``); quoted values stay on one line;
* a line starting with ``;`` opens a text block that the next line starting with ``;`` closes;
* ``data_NAME``, ``save_NAME`` ... ``save_``, ``loop_`` tags values ``stop_``; several loops
  may stand in one save frame; loop values fill rows of ``len(tags)`` values, several rows per
  line allowed.

:func:`parse_star_syntax` is pure (text in, :class:`StarBlock` objects out). It backs the
NMR-STAR 2.1 reader (:mod:`.star21`) and finds the file line of every row of an NMR-STAR 3.x
shift loop (:mod:`.star3`).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

from ..errors import InputError

__all__ = ["StarLoop", "StarFrame", "StarBlock", "parse_star_syntax"]

_TOKEN = re.compile(r"""[ \t\f\v]*(?:(\#.*)|'(.*?)'(?=\s|$)|"(.*?)"(?=\s|$)|(\S+))""")
#: a line the tokenizer may split on blanks: printable ASCII and tabs only, no quote or comment
#: character (then ``str.split`` gives exactly the bare words the pattern above would)
_PLAIN = re.compile(r"[^\x20-\x7e\t]|['\"#]")


@dataclass
class StarLoop:
    """One ``loop_``: tag names, rows of string values, and the file line of each row."""

    tags: list[str]
    line: int
    rows: list[list[str]] = field(default_factory=list)
    row_lines: list[int] = field(default_factory=list)

    def column(self, tag: str) -> list[str] | None:
        """Values of one tag (exact name, case-insensitive), or None if the loop lacks it."""
        low = [t.lower() for t in self.tags]
        if tag.lower() not in low:
            return None
        k = low.index(tag.lower())
        return [r[k] for r in self.rows]


@dataclass
class StarFrame:
    """A save frame (or the data block's own top level): single tags and loops."""

    name: str
    line: int
    tags: dict[str, tuple[str, int]] = field(default_factory=dict)
    loops: list[StarLoop] = field(default_factory=list)

    def tag(self, name: str, default: str | None = None) -> str | None:
        for k, (v, _) in self.tags.items():
            if k.lower() == name.lower():
                return v
        return default

    def loop_with(self, tag: str) -> StarLoop | None:
        for lp in self.loops:
            if lp.column(tag) is not None:
                return lp
        return None


@dataclass
class StarBlock:
    """A ``data_`` block: its save frames (in order) and top-level items."""

    name: str
    line: int
    frames: list[StarFrame] = field(default_factory=list)
    top: StarFrame | None = None


def _tokens(text: str, path: str):
    """Yield (kind, value, line): kind 'word' (bare), 'value' (quoted or text block)."""
    lines = text.splitlines()
    i = 0
    n = len(lines)
    while i < n:
        s = lines[i]
        if s.startswith(";"):
            start = i + 1
            buf = [s[1:]]
            i += 1
            while i < n and not lines[i].startswith(";"):
                buf.append(lines[i])
                i += 1
            if i >= n:
                raise InputError(f"semicolon text block opened at line {start} is never closed",
                                 path=path, line=start)
            rest = lines[i][1:]
            yield "value", "\n".join(buf).strip("\n"), start
            if rest.strip():  # tokens after the closing ';' on the same line
                lines[i] = " " + rest
            else:
                i += 1
            continue
        ln = i + 1
        if _PLAIN.search(s) is None:
            for w in s.split():
                yield "word", w, ln
            i += 1
            continue
        pos = 0
        while pos < len(s):
            m = _TOKEN.match(s, pos)
            if m is None or m.end() == pos:
                break
            pos = m.end()
            if m.group(1) is not None:
                break
            if m.group(2) is not None:
                yield "value", m.group(2), ln
            elif m.group(3) is not None:
                yield "value", m.group(3), ln
            elif m.group(4) is not None:
                w = m.group(4)
                if w[0] in "'\"":
                    raise InputError(f"unclosed quote {w[0]} in {w[:20]!r}", path=path, line=ln)
                yield "word", w, ln
        i += 1


def parse_star_syntax(text: str, path: str = "<string>") -> list[StarBlock]:
    """Parse STAR text (NMR-STAR 2.1 or 3.x) into blocks, save frames and loops.

    Parameters
    ----------
    text : str
        The file contents.
    path : str
        Used in error messages only.

    Returns
    -------
    list of StarBlock

    Raises
    ------
    InputError
        Unclosed text block or quote, a loop or save frame still open at the end of the file,
        a loop whose value count is not a multiple of its tag count, a value without a tag,
        or no ``data_`` block at all.
    """
    blocks: list[StarBlock] = []
    frame: StarFrame | None = None
    loop: StarLoop | None = None
    loop_vals: list[tuple[str, int]] = []
    in_loop_tags = False
    pending_tag: tuple[str, int] | None = None

    def close_loop(end_line: int) -> None:
        nonlocal loop, loop_vals, in_loop_tags
        assert loop is not None
        nt = len(loop.tags)
        if nt == 0:
            raise InputError(f"loop_ at line {loop.line} has no tags", path=path, line=loop.line)
        if len(loop_vals) % nt:
            raise InputError(f"loop at line {loop.line} has {len(loop_vals)} values, not a multiple "
                             f"of its {nt} tags (a row is incomplete)", path=path, line=loop.line)
        for k in range(0, len(loop_vals), nt):
            chunk = loop_vals[k:k + nt]
            loop.rows.append([v for v, _ in chunk])
            loop.row_lines.append(chunk[0][1])
        loop, loop_vals, in_loop_tags = None, [], False

    def current() -> StarFrame:
        if not blocks:
            raise InputError("STAR content before any data_ block", path=path, line=ln)
        if frame is not None:
            return frame
        blk = blocks[-1]
        if blk.top is None:
            blk.top = StarFrame(name="", line=blk.line)
        return blk.top

    ln = 1
    for kind, val, ln in _tokens(text, path):
        low = val.lower() if kind == "word" else ""
        if kind == "word" and (low in ("stop_", "loop_", "global_") or low.startswith(("data_", "save_"))):
            if pending_tag is not None:
                raise InputError(f"tag {pending_tag[0]} has no value", path=path, line=pending_tag[1])
            if low == "stop_":
                if loop is None:
                    raise InputError("stop_ without loop_", path=path, line=ln)
                close_loop(ln)
                continue
            if loop is not None:
                if low == "loop_" or low.startswith("save_") or low.startswith("data_"):
                    raise InputError(f"loop opened at line {loop.line} is not closed by stop_",
                                     path=path, line=loop.line)
            if low == "loop_":
                loop = StarLoop(tags=[], line=ln)
                current().loops.append(loop)
                in_loop_tags = True
            elif low.startswith("data_"):
                if frame is not None:
                    raise InputError(f"save frame {frame.name} (line {frame.line}) is not closed "
                                     f"by save_", path=path, line=frame.line)
                blocks.append(StarBlock(name=val[5:], line=ln))
            elif low == "save_":
                if frame is None:
                    raise InputError("save_ without an open save frame", path=path, line=ln)
                frame = None
            elif low.startswith("save_"):
                if frame is not None:
                    raise InputError(f"save frame {frame.name} (line {frame.line}) is not closed "
                                     f"by save_", path=path, line=frame.line)
                if not blocks:
                    raise InputError("save frame before any data_ block", path=path, line=ln)
                frame = StarFrame(name=val[5:], line=ln)
                blocks[-1].frames.append(frame)
            continue
        if kind == "word" and val.startswith("_"):
            if pending_tag is not None:
                raise InputError(f"tag {pending_tag[0]} has no value", path=path, line=pending_tag[1])
            if loop is not None and in_loop_tags:
                loop.tags.append(val)
                continue
            if loop is not None:  # a tag after loop values without stop_
                raise InputError(f"loop opened at line {loop.line} is not closed by stop_",
                                 path=path, line=loop.line)
            pending_tag = (val, ln)
            continue
        # a value
        if loop is not None:
            in_loop_tags = False
            loop_vals.append((val, ln))
        elif pending_tag is not None:
            current().tags[pending_tag[0]] = (val, pending_tag[1])
            pending_tag = None
        else:
            raise InputError(f"value {val[:30]!r} without a tag", path=path, line=ln)
    if loop is not None:
        raise InputError(f"file ends inside the loop opened at line {loop.line} (no stop_)",
                         path=path, line=loop.line)
    if pending_tag is not None:
        raise InputError(f"tag {pending_tag[0]} has no value", path=path, line=pending_tag[1])
    if frame is not None:
        raise InputError(f"file ends inside save frame {frame.name} opened at line {frame.line}",
                         path=path, line=frame.line)
    if not blocks:
        raise InputError("no data_ block found (not a STAR file?)", path=path, line=None)
    return blocks
