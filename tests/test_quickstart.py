"""The README's two Quick-start commands, run as a newcomer would."""

import json
import os
import re
import subprocess
import sys
import venv
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def quick_start_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = re.search(r"## Quick start\s+```bash\n(.*?)```", text, re.S)
    assert block, "README.md lacks a Quick start code block"
    return [line.strip() for line in block.group(1).splitlines() if line.strip()]


def test_quick_start_holds_exactly_two_commands_and_ci_runs_the_second():
    install_and_run, install_and_test = quick_start_commands()
    assert install_and_run.startswith("pip install -e . && wakes run cases/")
    assert install_and_test == 'pip install -e ".[test]" && python -m pytest'
    ci = [line.strip() for line in (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
          if line.strip() and not line.startswith("#")]
    # CI installs the test extra, lints, then runs the README's test command as written
    assert 'python -m pip install -e ".[test]"' in ci and ci[-1] == "python -m pytest -q"
    assert any(line.startswith("python -m ruff check") for line in ci)


@pytest.mark.slow
def test_first_command_runs_the_demo_in_a_fresh_environment(tmp_path):
    """A new virtual environment installs the checkout and runs the demo case,
    with the README's command as written (the environment reuses this
    interpreter's packages so no dependency is downloaded again)."""
    env_dir = tmp_path / "venv"
    venv.EnvBuilder(system_site_packages=True, with_pip=True).create(env_dir)
    bin_dir = env_dir / ("Scripts" if os.name == "nt" else "bin")
    env = dict(os.environ, PATH=f"{bin_dir}{os.pathsep}{os.environ['PATH']}",
               VIRTUAL_ENV=str(env_dir))
    command = quick_start_commands()[0]
    out_dir = re.search(r"--out (\S+)", command).group(1)
    work = tmp_path / "checkout"
    subprocess.run(["git", "clone", "-q", str(ROOT), str(work)], check=True)
    done = subprocess.run(command, shell=True, cwd=work, env=env, capture_output=True,
                          text=True, timeout=900)
    assert done.returncode == 0, done.stderr[-2000:]
    summary = json.loads((work / out_dir / "summary.json").read_text())
    assert summary["bodies"]
    assert sys.executable  # the test interpreter itself is untouched
