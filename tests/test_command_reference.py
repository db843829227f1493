"""docs/commands.md must describe the argument parser as it is (common practice, no source)."""
import importlib.util
import os
import re
from pathlib import Path

import pytest

from shiftcheck.cli import build_parser

ROOT = Path(__file__).resolve().parents[1]


def _load_tool():
    spec = importlib.util.spec_from_file_location("gen_ref", ROOT / "tools" / "gen_command_reference.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_command_reference_matches_parser():
    os.environ.setdefault("COLUMNS", "100")
    doc = (ROOT / "docs" / "commands.md").read_text()
    assert doc == _load_tool().render(), "run: python tools/gen_command_reference.py"


def test_every_option_is_documented():
    doc = (ROOT / "docs" / "commands.md").read_text()
    tool = _load_tool()
    for name, sub in tool._subparsers(build_parser()).items():
        assert f"## shiftcheck {name}" in doc
        for action in sub._actions:
            for opt in action.option_strings:
                if opt in ("-h", "--help", "--debug"):
                    continue
                assert re.search(re.escape(f"`{opt}`"), doc), f"{name}: {opt} missing in docs/commands.md"


@pytest.mark.parametrize("page", ["user_guide.md", "method.md", "outputs.md", "faq.md", "validation.md"])
def test_docs_pages_exist_and_link_targets_resolve(page):
    path = ROOT / "docs" / page
    assert path.exists(), f"docs/{page} missing"
    text = path.read_text()
    for target in re.findall(r"\]\(([^)#:]+)(?:#[^)]*)?\)", text):
        assert (path.parent / target).exists(), f"docs/{page}: broken link {target}"
