"""Command line: parses arguments, calls the library, prints. Nothing else lives here.

Each sub-command is a module in :mod:`shiftcheck.commands` with ``add_parser(subparsers)``
and ``run(args) -> int``.
"""
from __future__ import annotations

import argparse
import importlib
import sys

from . import __version__
from .errors import ShiftcheckError

__all__ = ["main", "build_parser", "COMMANDS"]

# order shown in --help
COMMANDS = ["inspect", "check", "predict", "score", "report", "calibrate", "demo"]


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="shiftcheck",
        description="Check candidate protein structures against assigned NMR chemical shifts: "
                    "predict shifts from each model, estimate referencing offsets, rank the "
                    "models and flag residues that disagree.",
        epilog="Agreement with chemical shifts supports a structure but does not prove it.",
    )
    parser.add_argument("--version", action="version", version=f"shiftcheck {__version__}")
    parser.add_argument("--debug", action="store_true", help="show a traceback on errors")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        mod = importlib.import_module(f".commands.{name}", __package__)
        p = mod.add_parser(sub)
        p.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                       help="show a traceback on errors")
        p.set_defaults(_run=mod.run)
    return parser


class _Terminated(KeyboardInterrupt):
    """SIGTERM/SIGHUP turned into an exception, so staged outputs and temporary files are removed."""


def _on_signal(signum, frame):  # pragma: no cover - exercised in a subprocess test
    raise _Terminated(signum)


def _catch_signals() -> None:
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return
    for name in ("SIGTERM", "SIGHUP"):
        sig = getattr(signal, name, None)
        if sig is not None and signal.getsignal(sig) in (signal.SIG_DFL, None):
            signal.signal(sig, _on_signal)


def main(argv: list[str] | None = None) -> int:
    _catch_signals()
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    try:
        return int(args._run(args) or 0)
    except ShiftcheckError as exc:
        if getattr(args, "debug", False):
            raise
        print(f"shiftcheck: error: {exc}", file=sys.stderr)
        return 2
    except _Terminated as exc:
        print("shiftcheck: terminated by a signal; nothing written", file=sys.stderr)
        return 128 + int(exc.args[0]) if exc.args else 143
    except KeyboardInterrupt:
        print("shiftcheck: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # e.g. `shiftcheck predict model.pdb | head`: the reader left
        import os

        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
