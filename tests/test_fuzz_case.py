"""Hostile case files: every key of the schema mutated; the outcome is a run or a WakesError.

The fuzz test walks the case schema (every section, every body type, the
airfoil table inside each), mutates a few keys of one of several small base
cases to wrong types, negative, zero, tiny, huge, NaN and infinite values,
empty strings, unknown choices and bad paths, deletes keys, adds unknown
keys and sections, and moves bodies into each other and into the ground.
Each mutated case goes through what ``wakes check`` does (parse, estimate,
the resolved TOML read back) and, when it is valid, through a few steps of
what ``wakes run`` does, in-process and through :func:`wakes.cli.main`.
Allowed: a clean run, a run the watchdog stopped (exit 3) or the memory
budget refused (exit 4), or a :class:`wakes.errors.WakesError` with a
message (exit 2, nothing written). Anything else fails the test.

Profiles: by default a short one that runs in CI (the runs use the kernels
of the base cases only, so a cold numba cache compiles one set);
``WAKES_FUZZ_LONG=1`` runs the long profile of ``LONG_EXAMPLES`` cases, in
which every valid case runs, whatever kernels it needs;
``WAKES_FUZZ_EXAMPLES=N`` sets another number of cases for either. Examples are drawn
deterministically (``derandomize``), so every machine tries the same cases.
"""

from __future__ import annotations

import contextlib
import copy
import dataclasses
import datetime
import io
import math
import os
import shutil
import tempfile
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st
from wakes.case import BODY_TYPES, Case, TimeSpec, parse_case
from wakes.cli import main
from wakes.errors import CaseError, WakesError

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"      # relative polar paths of the base cases are read from here

LONG = os.environ.get("WAKES_FUZZ_LONG", "") not in ("", "0")
LONG_EXAMPLES = 10_000
SHORT_EXAMPLES = 100
EXAMPLES = int(os.environ.get("WAKES_FUZZ_EXAMPLES", LONG_EXAMPLES if LONG else SHORT_EXAMPLES))
RUN_STEPS = 3               # steps of a fuzzed run: enough to shed, move and roll up a wake
MAX_MEMORY = "200M"         # memory budget of a fuzzed run: larger cases are refused (exit 4)

WING = {"type": "wing", "model": "lifting-line", "span": 4.0, "chord": 0.5, "spanwise_panels": 6}
ROTOR = {"type": "rotor", "blades": 2, "radius": 0.5, "root_cutout": 0.1,
         "chord": {"law": "linear", "root": 0.06, "tip": 0.04}, "twist": -8.0, "collective": 10.0,
         "rpm": 1200.0, "panels": 4, "azimuth_step": 20.0, "rollup_age": 20.0,
         "wake_revolutions": 1.0, "wake_fade_revolutions": 0.25}
BASES = {
    "wing": {"title": "fuzz wing", "freestream": {"speed": 10.0, "angle_of_attack": 4.0},
             "bodies": {"wing": WING}, "time": {"steps": 3}},
    "lattice": {"freestream": {"speed": 10.0, "angle_of_attack": 4.0},
                "bodies": {"wing": {**WING, "model": "vortex-lattice", "spanwise_panels": 4,
                                    "chordwise_panels": 2, "sweep": 10.0}},
                "wake": {"motion": "frozen"}, "time": {"steps": 3}},
    "particles": {"freestream": {"speed": 10.0, "angle_of_attack": 4.0}, "bodies": {"wing": WING},
                  "wake": {"model": "particles", "near_wake_steps": 1}, "time": {"steps": 3}},
    "rotor": {"bodies": {"rotor": ROTOR}, "time": {"steps": 3}, "solver": {"relaxation": 0.8}},
    "turbine": {"freestream": {"velocity": [7.0, 0.0, 0.0]},
                "bodies": {"turbine": {**ROTOR, "kind": "turbine", "axis": [1.0, 0.0, 0.0],
                                       "rpm": 120.0, "radius": 2.5, "root_cutout": 0.3,
                                       "chord": 0.2, "twist": {"law": "table", "eta": [0.0, 1.0],
                                                               "values": [-20.0, 2.0]},
                                       "collective": -1.0,
                                       "airfoil": {"polar": "validation/polars/turbine-section.csv",
                                                   "out_of_range": "flat-plate"}}},
                "ground": {"point": [0.0, 0.0, -5.0]}, "time": {"steps": 3}},
    "prop-wing": {"freestream": {"speed": 20.0, "angle_of_attack": 4.0},
                  "bodies": {"wing": {**WING, "span": 3.0, "chord": 0.3},
                             "propeller": {**ROTOR, "kind": "propeller", "axis": [-1.0, 0.0, 0.0],
                                           "hub": [-0.5, 0.8, 0.0], "radius": 0.25,
                                           "root_cutout": 0.04, "rpm": 4800.0}},
                  "ground": {"point": [0.0, 0.0, -2.0]},
                  "output": {"checkpoint_every": 1, "snapshot_every": 1}, "time": {"steps": 3}},
}
POLARS = ("validation/polars/turbine-section.csv", "polars/survey-glider-section.csv")
BASE_KERNELS = {("filaments", "lamb-oseen")}   # wake model and core the short profile runs


# ----------------------------------------------------------------- the schema, walked

def _fields(cls):
    return [f for f in dataclasses.fields(cls)
            if not f.metadata.get("internal") and f.metadata.get("kind") != "bodies"]


def schema_slots() -> list[tuple[tuple, dataclasses.Field]]:
    """Every key of the schema as (path, field); body keys as ("bodies", TYPE, ...)."""
    out = []

    def walk(cls, prefix):
        for f in _fields(cls):
            out.append((prefix + (f.name,), f))
            if f.metadata.get("kind") == "table":
                walk(type(f.default), prefix + (f.name,))

    walk(Case, ())
    for name, cls in BODY_TYPES.items():
        walk(cls, ("bodies", name))
    return out


SLOTS = schema_slots()


def test_the_walk_reaches_every_key_of_every_section_and_body_type():
    paths = {p for p, _ in SLOTS}
    for section in ("fluid", "freestream", "time", "solver", "wake", "output", "ground", "cluster"):
        assert (section,) in paths and any(p[0] == section and len(p) == 2 for p in paths), section
    for name, cls in BODY_TYPES.items():
        for f in _fields(cls):
            assert ("bodies", name, f.name) in paths
    assert ("bodies", "rotor", "rpm") in paths and ("bodies", "rotor", "airfoil", "polar") in paths
    assert ("bodies", "wing", "airfoil", "cd2") in paths and ("title",) in paths


# ----------------------------------------------------------------- values

NAN, INF = float("nan"), float("inf")
SPECIAL_NUMBERS = [NAN, INF, -INF, 0, 0.0, -0.0, -1, -1.0, 1, 5e-324, 1e-300, -1e-300, 1e-12, 1e300,
                   -1e300, 1.7976931348623157e308, 10 ** 30, -(10 ** 30), 2 ** 63, 2 ** 64 + 1,
                   10 ** 5000, -(10 ** 5000)]      # more digits than Python turns into text
SCALARS = st.one_of(st.booleans(), st.integers(-(2 ** 70), 2 ** 70),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=6),
                    st.sampled_from(SPECIAL_NUMBERS))
TOML_ONLY = st.one_of(st.datetimes(timezones=st.none() | st.just(datetime.UTC)), st.dates(), st.times())
KEY_NAMES = st.text("abcdefghijklmnopqrstuvwxyz_-", min_size=1, max_size=8)
ANY = st.one_of(SCALARS, TOML_ONLY, st.just(""), st.lists(SCALARS, max_size=4),
                st.dictionaries(KEY_NAMES, SCALARS, max_size=3),
                st.dictionaries(st.integers(0, 3), SCALARS, min_size=1, max_size=2))   # not TOML: the API only
PATHS = ["", " ", "nope.csv", "validation/polars/turbine-section.csv", "polars/survey-glider-section.csv",
         "validation", "validation/polars", "/", "/nonexistent/p.csv", "../README.md", "a" * 300,
         "x\x00y", "drone-lift-rotor.toml", "validation/../polars/survey-glider-section.csv",
         str(CASES / "polars" / "survey-glider-section.csv"), "\u00e9t\u00e9.csv", "polars/"]


def _number_near_range(meta, integer: bool):
    """Numbers in and around a key's range: bounds, just beyond them, inside."""
    lo, hi, above = meta.get("minimum"), meta.get("maximum"), meta.get("above")
    low = lo if lo is not None else above
    marks = [b for b in (lo, hi, above) if b is not None]
    near = []
    for b in marks:
        near += [b, math.nextafter(float(b), INF), math.nextafter(float(b), -INF), b * 1.5, b / 2, -b]
    if integer:
        near = [int(x) for x in near if math.isfinite(x)] + [int(b) + d for b in marks for d in (-1, 1)]
        inside = st.integers(int(low) if low is not None else -1000, int(hi) if hi is not None else 1000)
        return st.one_of(st.sampled_from(near or [0]), inside)
    inside = st.floats(low if low is not None else -1e6, hi if hi is not None else 1e6,
                       allow_nan=False, allow_infinity=False)
    if low is not None and low > 0 and hi is not None:
        log = st.floats(math.log10(low), math.log10(hi)).map(lambda e: 10.0 ** e)
        inside = st.one_of(inside, log)
    return st.one_of(st.sampled_from(near or [0.0]), inside)


def _distribution(meta):
    num = st.one_of(_number_near_range(meta, False), st.sampled_from(SPECIAL_NUMBERS), SCALARS)
    eta = st.one_of(st.just([0.0, 1.0]), st.just([-1.0, 0.0, 1.0]), st.just([0.0, 0.5, 1.0]),
                    st.lists(st.floats(-2, 2), max_size=5), st.lists(SCALARS, max_size=3))
    law = st.sampled_from(["constant", "linear", "elliptic", "table", "cubic", "", 3])
    table = st.fixed_dictionaries({"law": law}, optional={
        "value": num, "root": num, "tip": num, "eta": eta, "values": st.lists(num, max_size=5),
        "extra": SCALARS})
    return st.one_of(num, table)


def value_for(field: dataclasses.Field):
    """A value for a key: mostly near what it accepts, sometimes anything at all."""
    meta = field.metadata
    kind = meta.get("kind")
    if kind in ("float", "int"):
        plausible = st.one_of(_number_near_range(meta, kind == "int"), st.sampled_from(SPECIAL_NUMBERS))
    elif kind == "str":
        choices = list(meta.get("choices") or ()) or ["tcp://127.0.0.1:1", "tcp://host:99999",
                                                       "ftp://x:1", "demo case", "a\nb\"c\\"]
        plausible = st.sampled_from(choices + [c[:-1] for c in choices if c] + [c.upper() for c in choices])
    elif kind == "bool":
        plausible = st.sampled_from([True, False, "true", 1, 0])
    elif kind == "vec3":
        comp = st.one_of(_number_near_range(meta, False), st.sampled_from([0.0, 1.0, -1.0, 0.5]),
                         st.sampled_from(SPECIAL_NUMBERS))
        plausible = st.one_of(st.lists(comp, min_size=3, max_size=3),
                              st.lists(st.floats(-2.0, 2.0), min_size=3, max_size=3),
                              st.lists(comp, max_size=5))
    elif kind == "distribution":
        plausible = _distribution(meta)
    elif kind == "path":
        plausible = st.sampled_from(PATHS)
    elif kind == "table":
        plausible = st.dictionaries(st.sampled_from([f.name for f in _fields(type(field.default))]
                                                    + ["unknown"]), SCALARS, max_size=3)
    else:
        raise AssertionError(kind)
    return st.one_of(plausible, plausible, plausible, ANY)


# ----------------------------------------------------------------- mutations

def _set(data: dict, path: tuple, value, delete: bool = False) -> None:
    node = data
    for k in path[:-1]:
        if not isinstance(node.get(k), dict):
            node[k] = {}
        node = node[k]
    if delete:
        node.pop(path[-1], None)
    else:
        node[path[-1]] = value


def _bodies(data) -> dict:
    b = data.get("bodies")
    return b if isinstance(b, dict) else {}


def _place(body: dict):
    """Where a body sits: a wing's position or a rotor's hub."""
    key = "hub" if body.get("type") == "rotor" else "position"
    where = body.get(key, [0.0, 0.0, 0.0])
    ok = isinstance(where, list) and len(where) == 3 and all(isinstance(x, (int, float)) for x in where)
    return key, (where if ok else [0.0, 0.0, 0.0])


def _desc(value) -> str:
    """``repr(value)`` for the record of a mutation, also for integers too long to print."""
    try:
        return repr(value)[:80]
    except ValueError:
        return f"a {type(value).__name__} with an integer too long to print"


@st.composite
def mutation(draw, data: dict):
    """Change ``data`` in place by one mutation; return its description."""
    bodies = _bodies(data)
    what = draw(st.sampled_from(["key", "key", "key", "key", "delete", "unknown key", "unknown section",
                                 "section type", "bodies", "collide", "ground", "extremes", "extremes"]))
    if what in ("key", "delete"):
        path, f = draw(st.sampled_from(SLOTS))
        if path[0] == "bodies":
            same = [n for n, b in bodies.items() if isinstance(b, dict) and b.get("type") == path[1]]
            name = draw(st.sampled_from(same or list(bodies) or ["wing"]))
            path = ("bodies", name) + path[2:]
        if what == "delete":
            _set(data, path, None, delete=True)
            return f"delete {'.'.join(map(str, path))}"
        value = draw(value_for(f))
        _set(data, path, value)
        return f"{'.'.join(map(str, path))} = {_desc(value)}"
    if what == "extremes":      # every number of one section or body at a bound or inside its range
        tables = sorted({p[:-1] for p, f in SLOTS if p[0] != "bodies"} - {()})
        tables += [("bodies", n) for n in sorted(bodies, key=str)]
        table = draw(st.sampled_from(tables))
        kind = bodies[table[1]].get("type") if table[0] == "bodies" and isinstance(bodies[table[1]], dict) else None
        schema = table if table[0] != "bodies" else ("bodies", kind)
        for path, f in SLOTS:
            if path[:-1] == schema and f.metadata.get("kind") in ("float", "int", "vec3", "distribution"):
                m = f.metadata
                ends = [b for b in (m.get("minimum"), m.get("maximum")) if b is not None]
                if m.get("above") is not None and m.get("minimum") is None:
                    ends.append(m["above"] + (1 if m.get("kind") == "int" else 1e-6))
                pick = draw(st.sampled_from(ends + ["keep", "inside"]))
                if pick == "inside":
                    pick = draw(_number_near_range(m, m.get("kind") == "int"))
                if pick != "keep":
                    value = [pick] * 3 if m.get("kind") == "vec3" else pick
                    _set(data, table + path[-1:], int(value) if m.get("kind") == "int" else value)
        return f"extremes of {'.'.join(map(str, table))}"
    if what == "unknown key":
        sections = ["fluid", "freestream", "time", "solver", "wake", "output", "ground", "cluster"]
        where = draw(st.sampled_from(sections + [f"bodies.{n}" for n in bodies] + [""]))
        name = draw(KEY_NAMES)
        path = tuple(where.split(".")) + (name,) if where else (name,)
        _set(data, path, draw(ANY))
        return f"{'.'.join(map(str, path))} = ..."
    if what == "unknown section":
        name = draw(st.sampled_from(["flui", "wakes", "body", "extra", "bodies2"]))
        data[name] = draw(st.one_of(st.just({}), ANY))
        return f"[{name}]"
    if what == "section type":
        name = draw(st.sampled_from(["fluid", "freestream", "time", "wake", "bodies", "ground", "title"]))
        data[name] = draw(ANY)
        return f"{name} = ..."
    if what == "bodies":
        how = draw(st.sampled_from(["copy", "rename", "retype", "empty"]))
        if how == "empty" or not bodies:
            data["bodies"] = draw(st.sampled_from([{}, [], {"x": {}}, {"x": 1}]))
            return "bodies emptied"
        name = draw(st.sampled_from(sorted(bodies, key=str)))
        if how == "copy":
            twin = copy.deepcopy(bodies[name])
            if isinstance(twin, dict):
                key, where = _place(twin)
                shift = draw(st.sampled_from([0.0, 1e-9, 0.01, 0.3, 2.0, 50.0]))
                axis = draw(st.integers(0, 2))
                twin[key] = [x + (shift if i == axis else 0.0) for i, x in enumerate(where)]
            bodies[f"{name}-2"] = twin
            return f"copy of {name} moved {shift} along {axis}" if isinstance(twin, dict) else "copy"
        if how == "rename":
            new = draw(st.sampled_from(["", "a b", "x.y", "wing\n", "é", "n" * 70, "ok_name-2"]))
            bodies[new] = bodies.pop(name)
            return f"body {name} renamed {new!r}"
        if isinstance(bodies[name], dict):
            bodies[name]["type"] = draw(st.sampled_from(["wing", "rotor", "fan", "", 1]))
        return f"body {name} retyped"
    if what == "collide":
        if len(bodies) < 1:
            return "nothing to collide"
        a = draw(st.sampled_from(sorted(bodies, key=str)))
        b = draw(st.sampled_from(sorted(bodies, key=str)))
        if not (isinstance(bodies[a], dict) and isinstance(bodies[b], dict)):
            return "nothing to collide"
        key, _ = _place(bodies[a])
        _, there = _place(bodies[b])
        offset = draw(st.lists(st.sampled_from([0.0, 0.0, 1e-6, 0.05, -0.05, 0.2, 0.5]),
                               min_size=3, max_size=3))
        bodies[a][key] = [x + d for x, d in zip(there, offset)]
        if draw(st.booleans()):   # and turn it
            turn = "axis" if bodies[a].get("type") == "rotor" else "orientation"
            bodies[a][turn] = draw(st.sampled_from([[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0],
                                                    [0.0, 30.0, 0.0], [90.0, 0.0, 0.0], [1.0, 1.0, 1.0]]))
        return f"{a} moved onto {b} + {offset}"
    z = draw(st.sampled_from([-10.0, -1.0, -0.3, -0.05, 0.0, 0.05, 1.0]))
    normal = draw(st.sampled_from([[0.0, 0.0, 1.0], [0.0, 0.0, -1.0], [0.0, 0.3, 1.0], [1.0, 0.0, 0.0]]))
    data["ground"] = {"point": [0.0, 0.0, z], "normal": normal}
    return f"ground through z = {z}, normal {normal}"


@st.composite
def fuzzed_cases(draw):
    base = draw(st.sampled_from(sorted(BASES)))
    data = copy.deepcopy(BASES[base])
    done = [draw(mutation(data)) for _ in range(draw(st.integers(1, 4)))]
    return base, data, done


# ----------------------------------------------------------------- TOML text of any data

def _toml_key(k) -> str:
    return '"' + "".join(_escape(ch) for ch in str(k)) + '"'


def _escape(ch: str) -> str:
    if ch in '"\\':
        return "\\" + ch
    return f"\\u{ord(ch):04x}" if ch < " " or ch == "\x7f" else ch


def toml_text(data: dict) -> str | None:
    """``data`` as one TOML document of inline tables, or None if TOML cannot hold it."""
    def value(v) -> str:
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, int):
            if not -(2 ** 63) <= v < 2 ** 63:
                raise ValueError(v)
            return str(v)
        if isinstance(v, float):
            return "nan" if math.isnan(v) else ("inf" if v > 0 else "-inf") if math.isinf(v) else repr(v)
        if isinstance(v, str):
            v.encode("utf-8")
            return '"' + "".join(_escape(ch) for ch in v) + '"'
        if isinstance(v, (datetime.datetime, datetime.date, datetime.time)):
            return v.isoformat()
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{" + ", ".join(f"{_toml_key(k)} = {value(x)}" for k, x in v.items()) + "}"
        raise ValueError(v)

    try:
        return "\n".join(f"{_toml_key(k)} = {value(v)}" for k, v in data.items()) + "\n"
    except (ValueError, UnicodeEncodeError):
        return None


# ----------------------------------------------------------------- what check and run must do

def _runs_here(case) -> bool:
    return LONG or (case.wake.model, case.wake.core) in BASE_KERNELS


def _a_message(exc: BaseException) -> None:
    text = str(exc)
    assert isinstance(exc, WakesError) and text.strip(), repr(exc)


def library_outcome(data: dict, workdir: Path, write: bool = True, steps: int = RUN_STEPS) -> str:
    """Parse, estimate and (if valid) run a few steps with the library; return what happened.

    ``write=False`` skips writing the run folder's tables and figures (checkpoints of a stopped
    run are still written); at most ``steps`` steps are run."""
    from wakes.estimate import estimate_case
    from wakes.run import run_guarded, write_run

    try:
        case = parse_case(data, source="fuzz.toml", base_dir=CASES)
    except CaseError as exc:
        _a_message(exc)
        return "rejected"
    again = parse_case(tomllib.loads(case.to_toml("header")), source="fuzz.toml", base_dir=CASES)
    assert again.to_dict() == case.to_dict()          # the resolved case reads back the same
    est = estimate_case(case, pair_rate=1e8)
    assert est.steps == case.time.steps and est.memory_mb > 0
    if not _runs_here(case) or case.cluster.scheduler:
        return "checked"
    short = dataclasses.replace(case, time=TimeSpec(dt=case.time.dt, steps=min(case.time.steps, steps)))
    out = workdir / "lib-run"
    try:
        run = run_guarded(short, out, write=lambda r, o: write_run(r, o, plots=False) if write else None,
                          max_memory=200 * 2 ** 20)
    except WakesError as exc:
        _a_message(exc)
        return "refused"
    assert run.status in ("finished", "unstable", "memory", "failed"), run.status
    if run.status != "finished":
        _a_message(WakesError(run.message))
        assert (out / "checkpoints").is_dir()
    return run.status


def cli_outcome(data: dict, workdir: Path) -> str:
    """``wakes check`` and (for a valid case of at most ``RUN_STEPS`` steps) ``wakes run``."""
    text = toml_text(data)
    if text is None:
        return "not TOML"
    for table in POLARS:        # the relative polar paths of the base cases, beside the case file
        (workdir / table).parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(CASES / table, workdir / table)
    path = workdir / "case.toml"
    path.write_text(text, encoding="utf-8")
    out = workdir / "cli-run"
    status, err = _main(["check", str(path), "--quiet"])
    assert status in (0, 2), status
    if status == 2:
        assert err.startswith("wakes: error: ") and err.count("\n") == 1, err
        status, err = _main(["run", str(path), "--out", str(out), "--no-plots", "--quiet"])
        assert status == 2 and err.startswith("wakes: error: "), err
        assert not out.exists()                    # nothing written
        return "exit 2"
    case = parse_case(tomllib.loads(text), source=str(path), base_dir=workdir)
    if case.time.steps > RUN_STEPS or not _runs_here(case) or case.cluster.scheduler:
        return "checked"
    status, err = _main(["run", str(path), "--out", str(out), "--no-plots", "--quiet",
                         "--max-memory", MAX_MEMORY])
    assert status in (0, 2, 3, 4), (status, err)
    # every line the command prints on stderr is its own: no traceback, no raw library warning
    assert all(line.startswith("wakes") for line in err.splitlines()), err
    if status:
        assert err.startswith("wakes: "), err
    else:
        assert (out / "summary.json").is_file() and (out / "case.toml").is_file()
    return f"run exit {status}"


def _main(argv) -> tuple[int, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(argv)
    return status, err.getvalue()


@settings(max_examples=EXAMPLES, deadline=None, derandomize=True,
          database=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                                HealthCheck.filter_too_much])
@given(fuzzed_cases())
def test_fuzzed_cases_check_and_run_or_fail_with_a_message(fuzzed):
    base, data, done = fuzzed
    with tempfile.TemporaryDirectory(prefix="wakes-fuzz-") as tmp:
        workdir = Path(tmp)
        library = library_outcome(copy.deepcopy(data), workdir)
        cli = cli_outcome(data, workdir)
        # the command's check and the library agree on whether the case is valid (an error met
        # during the run, such as a section leaving its polar table, is "refused" and "run exit 2")
        assert (library == "rejected") == (cli == "exit 2") or cli == "not TOML", (library, cli, done)
        event(f"library: {library}")
        event(f"command: {cli}")


# ----------------------------------------------------------------- every key, every kind of bad value

BAD_VALUES = [("text", "ten"), ("true", True), ("list", [1, 2]), ("table", {"a": 1}),
              ("date", datetime.date(2020, 1, 1)), ("negative", -1), ("negative float", -1.5),
              ("zero", 0), ("zero float", 0.0), ("tiny", 5e-324), ("1e-300", 1e-300), ("huge", 1e300),
              ("huge int", 10 ** 30), ("too long int", 10 ** 5000), ("nan", NAN), ("inf", INF),
              ("-inf", -INF), ("empty string", ""), ("unknown choice", "no-such-choice")]
SWEEP_BASE = {"wing": "wing", "rotor": "rotor"}       # the base case each key is changed in
SWEEP_SECTION_BASE = {"ground": "prop-wing", "cluster": "wing"}


def _sweep_values(field: dataclasses.Field) -> list:
    """The bad values of the brief, and the bounds of the key's range and just beyond them."""
    meta = field.metadata
    values = list(BAD_VALUES)
    for bound in (meta.get("minimum"), meta.get("maximum"), meta.get("above")):
        if bound is not None:
            out = (INF if bound == meta.get("maximum") else -INF)
            values += [(f"bound {bound:g}", bound), (f"beyond {bound:g}", math.nextafter(float(bound), out))]
    if meta.get("kind") == "vec3":
        values = [(name, [v] * 3) for name, v in values] + [("two numbers", [1.0, 2.0]), ("no numbers", [])]
    for choice in meta.get("choices") or ():
        values.append((f"choice {choice}", choice))
    return values + [("missing", None)]


def _sweep_slots(path: tuple) -> list[tuple[str, tuple]]:
    """The base cases and the paths in them where a key of the schema is changed: one base in
    the short profile, every base that has the key's section or body type in the long one."""
    if path[0] != "bodies":
        bases = sorted(BASES) if LONG else [SWEEP_SECTION_BASE.get(path[0], "wing")]
        return [(base, path) for base in bases]
    out = []
    for base in sorted(BASES) if LONG else [SWEEP_BASE[path[1]]]:
        out += [(base, ("bodies", name) + path[2:]) for name, body in BASES[base]["bodies"].items()
                if body["type"] == path[1]]
    return out


@pytest.mark.filterwarnings("error::RuntimeWarning")
@pytest.mark.parametrize("path, field", SLOTS, ids=[".".join(p) for p, _ in SLOTS])
def test_every_key_with_every_kind_of_bad_value(path, field, tmp_path):
    """Each key of the schema in turn: wrong types, negative, zero, tiny, huge, NaN, inf, empty
    text, an unknown choice, its bounds and just beyond, and missing; checked and (if valid) run.
    A value inside its key's range must not lead to overflow or NaN arithmetic either (numpy's
    RuntimeWarning is an error here: lift_slope = 5e-324 passed the old range and divided to inf)."""
    k = 0
    for base, where in _sweep_slots(path):
        for name, value in _sweep_values(field):
            data = copy.deepcopy(BASES[base])
            _set(data, where, value, delete=name == "missing")
            k += 1
            workdir = tmp_path / str(k)
            workdir.mkdir()
            outcome = library_outcome(data, workdir, write=LONG, steps=RUN_STEPS if LONG else 2)
            if name in ("nan", "-inf", "text", "list", "date") and field.metadata.get("kind") in ("float", "int"):
                assert outcome == "rejected", (name, outcome)
            if LONG:                # and through the command, as a user would
                cli_outcome(data, workdir)


# ----------------------------------------------------------------- named hostile cases

def _wing(**body):
    return {"freestream": {"speed": 10.0, "angle_of_attack": 4.0},
            "bodies": {"wing": {"type": "wing", "span": 4.0, "chord": 0.5, "spanwise_panels": 6, **body}},
            "time": {"steps": 3}}


@pytest.mark.parametrize("data, message", [
    (_wing(span=1e300), r"bodies.wing.span must be at most 10000 \[m\]; got 1e\+300 \(accepted: between "
                        r"0.0001 and 10000\)"),
    (_wing(span=1e-6), r"bodies.wing.span must be at least 0.0001 \[m\]"),
    (_wing(chord={"law": "table", "eta": [0.0, 1.0], "values": [0.5, 1e9]}), r"chord.values\[1\] must be at most"),
    (_wing(position=[0.0, 0.0, 1e200]), r"position\[2\] must be between -100000 and 100000 \[m\]"),
    (_wing(orientation=[0.0, math.inf, 0.0]), r"orientation\[1\] must be finite \(between -360 and 360\)"),
    ({**_wing(), "freestream": {"velocity": [900.0, 900.0, 0.0]}}, r"freestream.velocity .* at most 1000 m/s"),
    ({**_wing(), "fluid": {"density": 1e30}}, r"fluid.density must be at most 20000"),
    ({**_wing(), "time": {"dt": 1e-300}}, r"time.dt must be at least 1e-09 \[s\]"),
    ({**_wing(), "time": {"steps": 10 ** 30}}, r"time.steps must be an integer \(between 1 and 1e\+07\)"),
    ({**_wing(), "wake": {"max_age": math.nan}}, r"wake.max_age must be a number; got nan"),
    ({**_wing(), "ground": {"point": [0.0, 0.0, 0.0], "normal": [1e-9, 0.0, 0.0]}},
     r"ground.normal must be a nonzero vector .* at least 1e-06 long"),
    ({**_wing(), "cluster": {"scheduler": "tcp://host:99999"}}, r"cluster.scheduler must be an address"),
    ({"bodies": {"rotor": {**ROTOR, "radius": 100.0}}}, r"blade tips move at 1.257e\+04 m/s"),
    ({"bodies": {"rotor": {**ROTOR, "root_cutout": 0.49}}}, r"root_cutout must be less than .*at most 0.9"),
    ({**_wing(), "title": "\ud800"}, r"title must be Unicode text"),
    ({**_wing(), "bodies": {"wing\n": _wing()["bodies"]["wing"]}}, r"body name 'wing\\n' may hold only"),
])
def test_out_of_range_values_name_the_key_and_the_range(data, message):
    with pytest.raises(CaseError, match=message):
        parse_case(data, source="c.toml")


@pytest.mark.parametrize("bodies, message", [
    ({"a": WING, "b": WING}, r"bodies.a and bodies.b overlap near .* the planform of a meets the planform of b"),
    ({"a": WING, "b": {**WING, "orientation": [0.0, 0.0, 90.0]}}, r"bodies.a and bodies.b overlap"),
    ({"a": WING, "r": {**ROTOR, "kind": "propeller", "axis": [-1.0, 0.0, 0.0]}},
     r"the planform of a meets the disc swept by the blades of r"),
    ({"r": ROTOR, "s": {**ROTOR, "hub": [0.6, 0.0, 0.0]}}, r"the disc swept by the blades of r meets the disc"),
])
def test_overlapping_bodies_are_a_case_error(bodies, message):
    with pytest.raises(CaseError, match=message):
        parse_case({"freestream": {"speed": 10.0}, "bodies": bodies})


@pytest.mark.parametrize("bodies", [
    {"a": WING, "b": {**WING, "position": [0.0, 0.0, 1.0]}},                    # biplane
    {"a": WING, "b": {**WING, "position": [2.0, 0.0, 0.0]}},                    # tandem
    {"a": WING, "r": {**ROTOR, "kind": "propeller", "axis": [-1.0, 0.0, 0.0], "hub": [-0.5, 1.0, 0.0]}},
    {"r": ROTOR, "s": {**ROTOR, "hub": [0.0, 0.0, 0.3]}},                       # coaxial
])
def test_bodies_apart_are_accepted(bodies):
    assert len(parse_case({"freestream": {"speed": 10.0}, "bodies": bodies}).bodies) == 2


def test_a_wing_through_the_ground_is_a_case_error():
    data = {**_wing(dihedral=20.0, orientation=[45.0, 0.0, 0.0]), "ground": {"point": [0.0, 0.0, -0.5]}}
    with pytest.raises(CaseError, match=r"bodies.wing reaches through the ground plane .* m below it"):
        parse_case(data)
    data["ground"]["point"] = [0.0, 0.0, -3.0]
    assert parse_case(data).ground.point == (0.0, 0.0, -3.0)


def test_polar_path_may_not_leave_the_case_folder(tmp_path):
    data = _wing(airfoil={"polar": "../../etc/passwd"})
    with pytest.raises(CaseError, match="leads out of the case file's folder"):
        parse_case(data, source=str(tmp_path / "c.toml"), base_dir=tmp_path)


@pytest.mark.parametrize("path, message", [
    ("a" * 300 + ".csv", r"cannot use this path \(File name too long\)"),
    ("nope.csv", r"polar table file .*nope.csv' not found"),
    ("x\x00y", r"must be a file path of at most"),
])
def test_unusable_polar_paths_are_case_errors(tmp_path, path, message):
    with pytest.raises(CaseError, match=message):
        parse_case(_wing(airfoil={"polar": path}), source="c.toml", base_dir=tmp_path)


def test_strings_with_control_characters_read_back_from_the_resolved_toml():
    case = parse_case({**_wing(), "title": 'a "quoted"\ttitle\nwith \\ and \x01'})
    assert parse_case(tomllib.loads(case.to_toml())).title == case.title


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


@pytest.mark.parametrize("name", sorted(BASES))
def test_every_base_case_is_valid_and_runs_through_the_command(name, tmp_path):
    """The fuzz starts from valid cases of a few steps that finish, in-process and as a command."""
    case = parse_case(copy.deepcopy(BASES[name]), base_dir=CASES)
    assert case.time.steps == RUN_STEPS
    if _runs_here(case):
        assert library_outcome(copy.deepcopy(BASES[name]), tmp_path) == "finished"
        assert cli_outcome(copy.deepcopy(BASES[name]), tmp_path) == "run exit 0"
    else:
        assert cli_outcome(copy.deepcopy(BASES[name]), tmp_path) == "checked"
