"""Doctest set-up for the docstring examples in ``wakes/``.

Every example runs in a scratch folder holding a copy of the bundled cases
(``cases/``) and a finished run of the demo glider (``glider-run/``), so the
examples read as a user's session in a checkout and leave nothing behind.
"""

import os
import shutil
from pathlib import Path

import pytest
from _pytest.doctest import DoctestItem

ROOT = Path(__file__).resolve().parent


@pytest.fixture(scope="session")
def _example_folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("examples")
    shutil.copytree(ROOT / "cases", folder / "cases")
    from wakes.run import run_to_folder

    run_to_folder(str(folder / "cases" / "survey-glider.toml"), folder / "glider-run", plots=False)
    return folder


@pytest.fixture(autouse=True)
def _examples_run_in_the_scratch_folder(request):
    if not isinstance(request.node, DoctestItem):
        yield
        return
    folder = request.getfixturevalue("_example_folder")
    before = Path.cwd()
    os.chdir(folder)
    try:
        yield
    finally:
        os.chdir(before)
