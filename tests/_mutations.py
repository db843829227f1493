"""Mutations of a file's bytes for the property-based reader tests (common practice, no source):
delete, duplicate, swap and scramble lines, then set, insert, delete bytes or truncate."""
from __future__ import annotations

from hypothesis import strategies as st

__all__ = ["line_op", "byte_op", "mutate"]

line_op = st.tuples(st.sampled_from(["delete", "duplicate", "swap", "scramble"]),
                    st.integers(0, 10**6), st.integers(0, 10**6))
byte_op = st.tuples(st.sampled_from(["set", "insert", "delete", "truncate"]),
                    st.integers(0, 10**6), st.integers(0, 255))


def mutate(data: bytes, lops, bops, rnd) -> bytes:
    """Apply line operations ``lops`` then byte operations ``bops``; ``rnd`` shuffles bytes."""
    lines = data.split(b"\n")
    for op, i, j in lops:
        if not lines:
            break
        i, j = i % len(lines), j % len(lines)
        if op == "delete":
            del lines[i]
        elif op == "duplicate":
            lines.insert(j, lines[i])
        elif op == "swap":
            lines[i], lines[j] = lines[j], lines[i]
        else:
            b = bytearray(lines[i])
            rnd.shuffle(b)
            lines[i] = bytes(b)
    out = bytearray(b"\n".join(lines))
    for op, i, v in bops:
        if not out:
            break
        i %= len(out)
        if op == "set":
            out[i] = v
        elif op == "insert":
            out.insert(i, v)
        elif op == "delete":
            del out[i]
        else:
            del out[i:]
    return bytes(out)
