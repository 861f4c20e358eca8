"""Packaging: the version comes from the package metadata, and the test extra is complete."""

import ast
import re
import subprocess
import sys
import tomllib
from importlib import metadata
from pathlib import Path

import wakes

ROOT = Path(__file__).resolve().parents[1]
PROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]


def _names(requirements):
    return {re.split(r"[\[<>=!~ ;]", r, maxsplit=1)[0].lower().replace("_", "-") for r in requirements}


def test_version_is_the_distributions_and_the_cli_prints_it():
    assert wakes.__version__ == metadata.version("wakes") == PROJECT["version"]
    out = subprocess.run([sys.executable, "-m", "wakes.cli", "--version"], capture_output=True, text=True)
    assert out.returncode == 0 and out.stdout.strip() == f"wakes {PROJECT['version']}"


def test_every_third_party_import_of_the_package_and_tests_is_a_declared_dependency():
    """A fresh ``pip install -e ".[test]"`` has everything the suite imports, so no test
    is skipped for a missing module (the mpmath cross-check once was)."""
    declared = _names(PROJECT["dependencies"]) | _names(PROJECT["optional-dependencies"]["test"])
    declared |= {"distributed"} if "dask" in declared else set()   # dask[distributed]
    todo = list(declared)   # what a declared distribution itself requires comes with it
    while todo:
        try:
            requires = metadata.requires(todo.pop()) or []
        except metadata.PackageNotFoundError:   # a requirement for other Pythons or platforms
            continue
        for req in requires:
            name = _names([req]).pop()
            if "extra ==" not in req and name not in declared:
                declared.add(name)
                todo.append(name)
    owners = metadata.packages_distributions()
    missing = {}
    for path in [*ROOT.glob("wakes/**/*.py"), *ROOT.glob("tests/**/*.py"), ROOT / "conftest.py"]:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                tops = [a.name.split(".")[0] for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                tops = [node.module.split(".")[0]]
            else:
                continue
            for top in tops:
                if top in sys.stdlib_module_names or top in ("wakes", "tests", "_pytest"):
                    continue
                dists = {d.lower().replace("_", "-") for d in owners.get(top, [top])}
                if not dists & declared:
                    missing.setdefault(top, []).append(path.relative_to(ROOT).as_posix())
    assert not missing, f"imported but not declared in pyproject.toml: {missing}"
