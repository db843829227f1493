"""The command line skeleton: version, help, one-line errors (common practice, no source)."""
import subprocess
import sys

import shiftcheck
from shiftcheck.cli import main


def test_version(capsys):
    try:
        main(["--version"])
    except SystemExit as e:
        assert e.code == 0
    assert shiftcheck.__version__ in capsys.readouterr().out


def test_help_lists_commands():
    out = subprocess.run([sys.executable, "-m", "shiftcheck", "--help"], capture_output=True, text=True)
    assert out.returncode == 0
    assert "inspect" in out.stdout
