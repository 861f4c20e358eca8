"""The README's case-file reference and command list follow the code."""

import re
from pathlib import Path

from wakes.case import case_reference
from wakes.cli import _parser

README = Path(__file__).resolve().parents[1] / "README.md"


def test_case_reference_matches_the_schema():
    text = README.read_text(encoding="utf-8")
    m = re.search(r"<!-- case-reference -->\n(.*?)<!-- /case-reference -->", text, re.S)
    assert m, "README.md lacks the <!-- case-reference --> markers"
    assert m.group(1) == case_reference(), ("README case-file reference drifted from the schema; "
                                            "regenerate it from wakes.case.case_reference()")


def test_every_subcommand_is_listed():
    text = README.read_text(encoding="utf-8")
    sub = next(a for a in _parser()._actions if a.dest == "command")
    for name in sub.choices:
        assert f"`wakes {name}" in text, f"wakes {name} is not in the README"
