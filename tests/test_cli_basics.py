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
    from shiftcheck.cli import COMMANDS

    out = subprocess.run([sys.executable, "-m", "shiftcheck", "--help"], capture_output=True, text=True)
    assert out.returncode == 0
    for name in COMMANDS:
        assert name in out.stdout, name
    # an unknown sub-command is a usage error: argparse exits 2 (Python argparse docs)
    bad = subprocess.run([sys.executable, "-m", "shiftcheck", "no-such-command"], capture_output=True, text=True)
    assert bad.returncode == 2 and "Traceback" not in bad.stderr


def test_help_does_not_import_numpy():
    """`shiftcheck --help` stays fast (issue 14, target 6: <= 0.3 s; numpy's import alone is about
    0.13 s on the development machine): parsing the arguments of every command imports no numpy."""
    import subprocess
    import sys

    code = ("import sys\nfrom shiftcheck.cli import main\n"
            "try:\n    main(['--help'])\nexcept SystemExit:\n    pass\n"
            "for c in ('score', 'inspect', 'check', 'predict', 'report', 'demo', 'calibrate'):\n"
            "    try:\n        main([c, '--help'])\n    except SystemExit:\n        pass\n"
            "print('numpy' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip().splitlines()[-1] == "False"
