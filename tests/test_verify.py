"""The verification table that ``wakes verify`` prints."""

import pandas as pd
import pytest
from wakes import verify
from wakes.cli import main
from wakes.verify import CHECKS, FULL_CHECKS, CheckResult, run_checks


def test_every_classical_check_passes_and_names_its_source():
    table = run_checks()
    assert list(table.columns) == ["quantity", "computed", "reference", "source", "error", "test",
                                   "passed"]
    assert len(table) >= len(CHECKS)
    assert table["passed"].all(), table[~table["passed"]].to_string()
    assert table["source"].str.len().min() > 10


def test_the_full_set_holds_the_quick_one_and_the_wing_checks():
    assert set(CHECKS) < set(FULL_CHECKS)
    assert {"wing-slope", "wing-convergence", "wing-efficiency", "wing-ground",
            "wing-wagner", "wing-kussner"} <= set(FULL_CHECKS)


@pytest.mark.parametrize("bound, computed, passed", [
    ("relative", 1.04, True), ("relative", 1.06, False),
    ("above", 1.01, True), ("above", 1.0, False),
    ("below", 0.99, True), ("below", 1.0, False),
])
def test_a_row_passes_by_its_bound(bound, computed, passed):
    row = CheckResult("x", computed, 1.0, "a source", 0.05, bound=bound)
    assert row.passed is passed
    assert row.test == {"relative": "<= 5.0e-02", "above": "> ref", "below": "< ref"}[bound]


def test_an_unknown_bound_is_refused():
    with pytest.raises(ValueError, match="bound must be one of"):
        CheckResult("x", 1.0, 1.0, "a source", bound="near")


def test_full_verify_prints_every_row_writes_the_csv_and_fails_on_one_bad_row(tmp_path, monkeypatch, capsys):
    """``wakes verify --full`` runs FULL_CHECKS (here two cheap stand-ins, one failing), prints
    the table with its sources, writes the CSV and exits 1; without --full only CHECKS run."""
    fake = {"good": lambda: [CheckResult("good row", 1.0, 1.0, "Source A 1900", 0.01)],
            "bad": lambda: [CheckResult("bad row", 2.0, 1.0, "Source B 1901", 0.01)]}
    monkeypatch.setattr(verify, "FULL_CHECKS", fake)
    monkeypatch.setattr(verify, "CHECKS", {"good": fake["good"]})
    out = tmp_path / "table.csv"
    assert main(["verify", "--full", "--csv", str(out)]) == 1
    printed = capsys.readouterr()
    assert "bad row" in printed.out and "Source B 1901" in printed.out and "FAIL" in printed.out
    assert "running bad" in printed.err
    assert pd.read_csv(out)["quantity"].tolist() == ["good row", "bad row"]
    assert main(["verify"]) == 0
    assert "bad row" not in capsys.readouterr().out
