"""``--set KEY=VALUE``: one case key changed from the command line.

``wakes run``, ``wakes check`` and ``wakes sweep`` take ``--set`` any
number of times; :func:`apply_settings` is the one place it is read. KEY is
a dotted case key (``time.steps``, ``bodies.main.collective``,
``bodies.wing.airfoil.cd0``), VALUE a TOML value (``40``, ``0.02``,
``true``, ``[0, 0, 1]``, ``{law = "linear", root = 0.3, tip = 0.2}``, a
quoted string); text that is not a TOML value is taken as a string, so
``wake.model=particles`` needs no quotes. Each key is checked against the
schema before the case is: a key that does not exist gets the schema's
"did you mean", a value of the wrong type or range names the key and what
it accepts.
"""

from __future__ import annotations

import copy
import dataclasses
import difflib
import tomllib
from pathlib import Path

from ..errors import CaseError
from .schema import Context, _convert, public_fields, read_toml, reject_unknown, short
from .specs import BODY_TYPES, Case, parse_case


def _shown(text: str) -> str:
    """A setting as written in messages: as typed, or quoted when it holds line breaks or is long."""
    return text if text.isprintable() and len(text) <= 120 else short(text, 120)


def parse_setting(text: str) -> tuple[str, object]:
    """Split ``KEY=VALUE`` into the dotted key and the value read as TOML.

    Examples
    --------
    >>> parse_setting("time.steps=40")
    ('time.steps', 40)
    >>> parse_setting("bodies.rotor.axis=[0, 0, 1]")
    ('bodies.rotor.axis', [0, 0, 1])
    >>> parse_setting("wake.model=particles")
    ('wake.model', 'particles')
    """
    key, eq, value = text.partition("=")
    key = key.strip()
    parts = key.split(".")
    if not eq or not key or not all(parts):
        raise CaseError(f"--set {_shown(text)}: give KEY=VALUE with a dotted case key, e.g. "
                        "--set time.steps=40 or --set bodies.NAME.collective=9")
    try:
        table = tomllib.loads(f"v = {value}")
        if set(table) != {"v"}:     # text such as "1\nx = 2" holds more than one value
            raise ValueError
        return key, table["v"]
    except (tomllib.TOMLDecodeError, ValueError, RecursionError):
        return key, value.strip()    # not a TOML value: the text itself


def _field(cls, name: str, where: str, ctx):
    """The schema field ``name`` of section ``cls``; unknown names get the did-you-mean."""
    accepted = {f.name: f for f in public_fields(cls)}
    reject_unknown({name: None}, list(accepted), where, ctx)
    return accepted[name]


def _leaf(raw: dict, parts: list[str], ctx):
    """The schema field a dotted key names, and the key's path as written in messages."""
    if parts[0] == "bodies":
        bodies = raw.get("bodies") if isinstance(raw.get("bodies"), dict) else {}
        if len(parts) < 3:
            ctx.fail(f"key 'bodies' is set per body and key, e.g. bodies.{next(iter(bodies), 'NAME')}.KEY")
        if parts[1] not in bodies:
            close = difflib.get_close_matches(parts[1], list(bodies), n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close else ""
            ctx.fail(f"unknown body '{parts[1]}'; {hint}(bodies of the case: {', '.join(bodies) or 'none'})")
        body = bodies[parts[1]]
        cls = BODY_TYPES.get(body.get("type")) if isinstance(body, dict) else None
        if cls is None:
            ctx.fail(f"bodies.{parts[1]} has no valid type in the case file; set type there")
        where, rest = f"bodies.{parts[1]}", parts[2:]
    else:
        cls, where, rest = Case, "", parts
    while True:
        f = _field(cls, rest[0], where, ctx)
        where = f"{where}.{rest[0]}" if where else rest[0]
        rest = rest[1:]
        if not rest:
            return f, where
        if f.metadata.get("kind") != "table":
            ctx.fail(f"{where} is a single value ({f.metadata.get('kind')}), it has no key "
                     f"'{rest[0]}'; set it whole, e.g. --set {where}=VALUE")
        cls = type(f.default)


def _put(data: dict, parts: list[str], value) -> None:
    node = data
    for p in parts[:-1]:
        if not isinstance(node.get(p), dict):
            node[p] = {}
        node = node[p]
    node[parts[-1]] = value


def apply_settings(raw: dict, settings, *, cwd=None) -> dict:
    """The case data ``raw`` (as read from the case file) with each ``KEY=VALUE`` of ``settings`` set.

    Parameters
    ----------
    raw : dict
        The case file's tables, as :mod:`tomllib` reads them (not changed).
    settings : sequence of str
        ``KEY=VALUE`` texts, applied in order.
    cwd : path-like, optional
        Folder a relative file path given as a VALUE is taken from
        (default: the current folder, where the command was typed).

    Returns
    -------
    dict
        A new case table; the whole case is checked when it is parsed.

    Raises
    ------
    wakes.errors.CaseError
        Naming the ``--set`` text: a malformed setting, a key the schema
        does not know (with the closest one), a value of the wrong type or
        out of its range (with what the key accepts).

    Examples
    --------
    >>> apply_settings({"time": {"dt": 0.1}}, ["time.steps=40", "title=test"])
    {'time': {'dt': 0.1, 'steps': 40}, 'title': 'test'}
    >>> apply_settings({}, ["time.stesp=40"])
    Traceback (most recent call last):
    ...
    wakes.errors.CaseError: --set time.stesp=40: unknown key 'time.stesp'; did you mean 'steps'? (accepted: dt, steps)
    >>> apply_settings({}, ["time.steps=many"])
    Traceback (most recent call last):
    ...
    wakes.errors.CaseError: --set time.steps=many: time.steps must be an integer; got 'many'
    """
    data = copy.deepcopy(raw)
    base = Path(cwd) if cwd is not None else Path.cwd()
    for text in settings:
        key, value = parse_setting(text)
        ctx = Context(f"--set {_shown(text)}", base)
        parts = key.split(".")
        f, where = _leaf(data, parts, ctx)
        if f.metadata.get("kind") == "table":
            ctx.fail(f"{where} is a table of keys; set them one by one, e.g. --set {where}.KEY=VALUE")
        converted = _convert(f, value, where, ctx)
        if f.metadata.get("kind") == "path":
            value = converted    # absolute: taken from where the command was typed
        _put(data, parts, value)
    return data



def load_case_with(path, settings=()) -> Case:
    """:func:`wakes.case.load_case` with ``--set KEY=VALUE`` settings applied to the file's keys.

    The case remembers the settings (``case.settings``) for the header of
    the run folder's ``case.toml``, which holds their values resolved.

    Examples
    --------
    >>> case = load_case_with("cases/survey-glider.toml", ["time.steps=10", "bodies.wing.span=3"])
    >>> case.time.steps, case.body("wing").span, case.settings
    (10, 3.0, ('time.steps=10', 'bodies.wing.span=3'))
    """
    data = apply_settings(read_toml(path), settings)
    case = parse_case(data, source=str(path), base_dir=Path(path).resolve().parent)
    return dataclasses.replace(case, settings=tuple(settings))
