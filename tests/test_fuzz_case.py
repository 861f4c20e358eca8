"""Hostile input: mutated case files give a valid case or a WakesError, never another exception."""

import math
import time

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from wakes.case import parse_case
from wakes.errors import CaseError, WakesError

BASE = {"freestream": {"speed": 10.0, "angle_of_attack": 5.0},
        "bodies": {"wing": {"type": "wing", "model": "lifting-line", "span": 6.0, "chord": 1.0,
                            "spanwise_panels": 6}},
        "wake": {"model": "filaments"}, "time": {"steps": 4}, "solver": {"tolerance": 1e-6}}

PATHS = [("freestream",), ("freestream", "speed"), ("freestream", "angle_of_attack"),
         ("bodies",), ("bodies", "wing"), ("bodies", "wing", "type"), ("bodies", "wing", "span"),
         ("bodies", "wing", "chord"), ("bodies", "wing", "spanwise_panels"),
         ("bodies", "wing", "model"), ("wake",), ("wake", "model"), ("time",), ("time", "steps"),
         ("time", "dt"), ("solver", "tolerance"), ("output",), ("bodies", "wing", "airfoil")]

VALUES = st.one_of(st.none(), st.booleans(), st.integers(-10 ** 30, 10 ** 30),
                   st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=20),
                   st.just(math.nan), st.just(1e308), st.just(-1e308),
                   st.lists(st.floats(), max_size=4), st.dictionaries(st.text(max_size=5),
                                                                      st.integers(), max_size=3))


def _mutate(data, path, value, delete):
    import copy
    out = copy.deepcopy(data)
    node = out
    for k in path[:-1]:
        if not isinstance(node.get(k), dict):
            node[k] = {}
        node = node[k]
    if delete:
        node.pop(path[-1], None)
    else:
        node[path[-1]] = value
    return out


@settings(max_examples=150, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(PATHS), VALUES, st.booleans()), min_size=1, max_size=3))
def test_mutated_cases_are_valid_or_a_wakes_error(mutations):
    data = BASE
    for path, value, delete in mutations:
        data = _mutate(data, path, value, delete)
    start = time.perf_counter()
    try:
        parse_case(data)
    except WakesError as exc:
        assert str(exc)
    assert time.perf_counter() - start < 5.0   # bounded time (generous for a busy machine)


def test_polar_path_may_not_leave_the_case_folder(tmp_path):
    data = _mutate(BASE, ("bodies", "wing", "airfoil"), {"polar": "../../etc/passwd"}, False)
    with pytest.raises(CaseError, match="leads out of the case file's folder"):
        parse_case(data, source=str(tmp_path / "c.toml"), base_dir=tmp_path)


@pytest.mark.parametrize("text, line, what", [
    ("alpha_deg,cl,cd\n0,0.1,0.01\nhello world\n2,0.3,0.01\n", 3, "fields"),
    ("alpha_deg,cl,cd\n0,0.1,0.01\n1,0.2,0.01\n1,0.25,0.01\n", 4, "repeats"),
    ("# one row\nalpha_deg,cl,cd\n0,0.1,0.01\n", 3, "single data row"),
    ("alpha_deg,cl,cd\n0,0.1,0.01\n1,nan,0.01\n", 3, "finite"),
])
def test_bad_polar_rejected_naming_the_line(tmp_path, text, line, what):
    from wakes.aero.polars import load_polar_table
    f = tmp_path / "p.csv"
    f.write_text(text)
    with pytest.raises(CaseError, match=rf"line {line}: .*{what}"):
        load_polar_table(f)
