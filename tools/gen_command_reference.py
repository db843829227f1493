"""Write docs/commands.md from the argument parser, so the command reference cannot drift.

    python tools/gen_command_reference.py          # rewrite docs/commands.md
    python tools/gen_command_reference.py --check  # exit 1 if docs/commands.md is stale

tests/test_command_reference.py runs the same comparison.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from shiftcheck.cli import build_parser

DOC = Path(__file__).resolve().parents[1] / "docs" / "commands.md"

HEADER = """# Command reference

Generated from the argument parser by `python tools/gen_command_reference.py`; a test checks
that this page matches the parser. For a walk-through see [user_guide.md](user_guide.md).

Every command accepts `--debug` (show a traceback instead of the one-line error message).
Exit codes: 0 success, 2 bad input or usage (one line on stderr naming the file and problem),
3 `score --fail-on` condition met (outputs written; see [outputs.md](outputs.md#gates-for-scripts---fail-on-and---json)).
"""


def _subparsers(parser: argparse.ArgumentParser) -> dict[str, argparse.ArgumentParser]:
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            return dict(action.choices)
    return {}


def _option_rows(p: argparse.ArgumentParser) -> list[str]:
    rows = []
    for a in p._actions:
        if isinstance(a, argparse._HelpAction) or a.dest in ("debug",):
            continue
        if a.option_strings:
            names = ", ".join(f"`{s}`" for s in a.option_strings)
            if a.nargs != 0:
                metavar = a.metavar or a.dest.upper()
                if isinstance(metavar, tuple):
                    metavar = " ".join(metavar)
                names += f" {metavar}"
        else:
            names = f"`{a.metavar or a.dest}`"
        helptext = (a.help or "").replace("|", "\\|").replace("\n", " ")
        if "%(default)" in helptext:
            helptext = helptext.replace("%(default)s", str(a.default))
        elif a.default not in (None, False, argparse.SUPPRESS) and a.option_strings and a.nargs != 0:
            helptext += f" (default: {a.default})"
        if a.choices and not isinstance(a, argparse._SubParsersAction):
            helptext += " Choices: " + ", ".join(str(c) for c in a.choices) + "."
        rows.append(f"| {names} | {helptext} |")
    return rows


def render() -> str:
    parser = build_parser()
    out = [HEADER]
    for name, sub in _subparsers(parser).items():
        out.append(f"## shiftcheck {name}\n")
        desc = (sub.description or "").strip()
        if desc:
            out.append(desc + "\n")
        usage = " ".join(sub.format_usage().split())
        out.append("```\n" + usage.replace("usage: ", "") + "\n```\n")
        out.append("| argument | meaning |\n|---|---|")
        out.extend(_option_rows(sub))
        out.append("")
    return "\n".join(out).rstrip() + "\n"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--check", action="store_true", help="only compare, exit 1 if stale")
    args = ap.parse_args(argv)
    text = render()
    if args.check:
        current = DOC.read_text() if DOC.exists() else ""
        if current != text:
            print(f"{DOC} is stale: run python tools/gen_command_reference.py", file=sys.stderr)
            return 1
        return 0
    DOC.write_text(text)
    print(f"wrote {DOC}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
