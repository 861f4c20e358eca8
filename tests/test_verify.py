"""The verification table that ``wakes verify`` prints."""

from wakes.verify import CHECKS, run_checks


def test_every_classical_check_passes_and_names_its_source():
    table = run_checks()
    assert list(table.columns) == ["quantity", "computed", "reference", "source", "error",
                                   "passed"]
    assert len(table) >= len(CHECKS)
    assert table["passed"].all(), table[~table["passed"]].to_string()
    assert table["source"].str.len().min() > 10
