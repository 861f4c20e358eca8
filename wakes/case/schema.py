"""The case-file machinery: typed keys, parsing with "did you mean", TOML in and out.

Nothing here knows a section of the case: :mod:`wakes.case.specs` declares
the sections as frozen dataclasses whose fields are made by :func:`key`
(default, documentation, unit, accepted range), and this module turns a
table read by :mod:`tomllib` into those dataclasses, rejecting unknown keys
with the closest accepted one, and writes a resolved case back as TOML
(with tomli-w) and as a Markdown reference of every key.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import re
import stat
import sys
import tomllib
from dataclasses import field, fields
from pathlib import Path

import tomli_w

from ..aero.geometry import DISTRIBUTION_LAWS, Distribution
from ..errors import CaseError


def key(default=dataclasses.MISSING, doc: str = "", unit: str = "", *, kind: str = "float",
        minimum=None, maximum=None, above=None, choices=None, resolved: bool = False,
        allow_inf: bool = False):
    """A schema field: default, documentation, unit and accepted range.

    ``kind`` is one of float, int, bool, str, vec3, distribution, path,
    table. ``above`` is an exclusive lower bound, ``minimum``/``maximum``
    inclusive bounds. ``resolved`` marks a field whose default is worked
    out from the rest of the case; ``allow_inf`` accepts ``inf``.
    """
    meta = dict(doc=doc, unit=unit, kind=kind, minimum=minimum, maximum=maximum, above=above,
                choices=tuple(choices) if choices is not None else None, resolved=resolved,
                allow_inf=allow_inf)
    return field(default=default, metadata=meta)


def merge(base: dict, overrides: dict) -> dict:
    out = dict(base)
    for k, v in overrides.items():
        out[k] = merge(out[k], v) if isinstance(v, dict) and isinstance(out.get(k), dict) else v
    return out


MAX_CASE_BYTES = 2 ** 20     # largest case file read [B]; real cases are a few kB
MAX_PATH_CHARS = 4096


def read_toml(path) -> dict:
    """Read a TOML file (at most ``MAX_CASE_BYTES``); a syntax error names the file, line and column.

    Raises
    ------
    wakes.errors.CaseError
        If the file is missing, a folder, unreadable, too large, not UTF-8
        text or not valid TOML.
    """
    p = Path(path)
    try:
        info = p.stat()
    except (FileNotFoundError, NotADirectoryError):
        raise CaseError(f"case file '{p}' not found") from None
    except (OSError, ValueError) as exc:
        raise CaseError(f"case file {short(str(p))}: cannot read it ({reason(exc)})") from None
    if stat.S_ISDIR(info.st_mode):
        raise CaseError(f"case file '{p}' is a folder; give the TOML file of a case")
    if not stat.S_ISREG(info.st_mode):
        raise CaseError(f"case file '{p}' is not a regular file; give the TOML file of a case")
    if info.st_size > MAX_CASE_BYTES:
        raise CaseError(f"case file '{p}' is {info.st_size:,} bytes; at most "
                        f"{MAX_CASE_BYTES:,} bytes are read")
    try:
        with open(p, "rb") as fh:
            raw = fh.read(MAX_CASE_BYTES + 1)
    except OSError as exc:
        raise CaseError(f"case file '{p}': cannot read it ({reason(exc)})") from None
    if len(raw) > MAX_CASE_BYTES:
        raise CaseError(f"case file '{p}' is more than {MAX_CASE_BYTES:,} bytes; at most that is read")
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        if m:
            text = msg[:m.start()].strip()
            raise CaseError(f"{p}: invalid TOML at line {m.group(1)}, column {m.group(2)}: {text}") from None
        raise CaseError(f"{p}: invalid TOML: {msg}") from None
    except UnicodeDecodeError as exc:
        raise CaseError(f"{p}: not UTF-8 text ({exc.reason} at byte {exc.start})") from None
    except RecursionError:
        raise CaseError(f"{p}: arrays or tables nested too deeply to read") from None
    except ValueError as exc:    # e.g. an integer of more digits than Python reads
        raise CaseError(f"{p}: invalid TOML: {exc}") from None


def reason(exc: BaseException) -> str:
    """The operating system's words for an error (e.g. "Permission denied"), else its type."""
    return getattr(exc, "strerror", None) or str(exc) or type(exc).__name__


class Context:
    """Where a case comes from, for messages."""

    def __init__(self, source: str, base_dir: Path):
        self.source = source
        self.base_dir = base_dir

    def fail(self, message: str):
        raise CaseError(f"{self.source}: {message}")


def number(value, where, ctx, meta, integer=False):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        kind = "an integer" if integer else "a number"
        ctx.fail(f"{where} must be {kind}{unit_text(meta)}; got {short(value)}")
    if integer and not isinstance(value, int):
        ctx.fail(f"{where} must be an integer; got {value!r}")
    if isinstance(value, float) and math.isnan(value):
        ctx.fail(f"{where} must be a number; got nan")
    if isinstance(value, float) and math.isinf(value):
        if meta.get("allow_inf") and value > 0:
            return value
        ctx.fail(f"{where} must be finite{range_text(meta)}; got {value!r}")
    if integer and abs(value) > 2 ** 62:
        ctx.fail(f"{where} must be an integer{range_text(meta)}; got {short(value)}")
    check_range(value, where, ctx, meta)
    return int(value) if integer else float(value)


def check_range(value, where, ctx, meta):
    lo, hi, above = meta.get("minimum"), meta.get("maximum"), meta.get("above")
    if above is not None and not value > above:
        broken = f"greater than {above:g}"
    elif lo is not None and hi is not None and above is None and not lo <= value <= hi:
        broken = f"between {lo:g} and {hi:g}"
    elif lo is not None and not value >= lo:
        broken = f"at least {lo:g}"
    elif hi is not None and not value <= hi:
        broken = f"at most {hi:g}"
    else:
        return
    words = range_words(meta)
    full = f" (accepted: {words})" if words != broken else ""
    ctx.fail(f"{where} must be {broken}{unit_text(meta)}; got {short(value)}{full}")


def in_range(value, meta) -> bool:
    """Whether ``value`` is within the range of the key described by ``meta``."""
    lo, hi, above = meta.get("minimum"), meta.get("maximum"), meta.get("above")
    return ((above is None or value > above) and (lo is None or value >= lo)
            and (hi is None or value <= hi))


def range_words(meta) -> str:
    """The accepted range of a numeric key in words, e.g. "between 0.0001 and 10000"."""
    lo, hi, above = meta.get("minimum"), meta.get("maximum"), meta.get("above")
    if above is not None and lo is not None and lo > above:
        above = None                   # the inclusive bound says it all
    if lo is not None and hi is not None:
        text = f"between {lo:g} and {hi:g}"
    else:
        parts = ([f"greater than {above:g}"] if above is not None else []) + (
            [f"at least {lo:g}"] if lo is not None else []) + ([f"at most {hi:g}"] if hi is not None else [])
        text = " and ".join(parts)
    return text + (" (or inf)" if meta.get("allow_inf") and text else "")


def range_text(meta) -> str:
    words = range_words(meta)
    return f" ({words})" if words else ""


def unit_text(meta) -> str:
    return f" [{meta['unit']}]" if meta.get("unit") else ""


def _distribution(value, where, ctx, meta) -> Distribution:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        d = Distribution.constant(number(value, where, ctx, meta))
        return d
    if not isinstance(value, dict):
        ctx.fail(f"{where} must be a number or a table such as {{law = \"linear\", root = 1.0, "
                 f"tip = 0.5}}; got {short(value)}")
    law = value.get("law")
    if law not in DISTRIBUTION_LAWS:
        ctx.fail(f"{where}.law must be one of {', '.join(map(repr, DISTRIBUTION_LAWS))}; got {short(law)}")
    accepted = {"constant": ("value",), "linear": ("root", "tip"), "elliptic": ("root",),
                "table": ("eta", "values")}[law]
    reject_unknown(value, ("law",) + accepted, where, ctx)
    for k in accepted:
        if k not in value:
            ctx.fail(f"{where}: law \"{law}\" needs key '{k}' (keys: {', '.join(accepted)})")
    if law == "table":
        eta = number_list(value["eta"], f"{where}.eta", ctx, {})
        vals = number_list(value["values"], f"{where}.values", ctx, meta)
        return Distribution("table", eta=tuple(eta), values=tuple(vals))
    nums = {k: number(value[k], f"{where}.{k}", ctx, meta) for k in accepted}
    return Distribution(law, **nums)


def number_list(value, where, ctx, meta, length=None):
    """A list of numbers; ``meta``'s range applies to each."""
    if not isinstance(value, list) or (length is not None and len(value) != length):
        what = f"a list of {length} numbers" if length else "a list of numbers"
        ctx.fail(f"{where} must be {what}{unit_text(meta)}; got {short(value)}")
    return [number(v, f"{where}[{i}]", ctx, meta) for i, v in enumerate(value)]


def short(value, limit: int = 80) -> str:
    """``repr(value)`` cut to ``limit`` characters, for messages."""
    try:
        text = repr(value)
    except RecursionError:
        text = f"a {type(value).__name__} nested too deeply"
    except ValueError:         # an integer of more digits than Python converts to text
        digits = f"an integer of more than {sys.get_int_max_str_digits():,} digits"
        text = digits if isinstance(value, int) else f"a {type(value).__name__} holding {digits}"
    return text if len(text) <= limit else text[:limit - 3] + "..."


def reject_unknown(table: dict, accepted, where: str, ctx) -> None:
    for k in table:
        if not isinstance(k, str):
            ctx.fail(f"{where or 'the case'}: keys must be names (text); got {short(k)}")
        if k not in accepted:
            close = difflib.get_close_matches(k, accepted, n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close else ""
            prefix = f"{where}." if where else ""
            ctx.fail(f"unknown key '{prefix}{k}'; {hint}(accepted: {', '.join(accepted)})")


def _convert(f, value, where, ctx):
    meta = f.metadata
    kind = meta["kind"]
    if kind in ("float", "int"):
        return number(value, where, ctx, meta, integer=kind == "int")
    if kind == "bool":
        if not isinstance(value, bool):
            ctx.fail(f"{where} must be true or false; got {short(value)}")
        return value
    if kind == "str":
        if not isinstance(value, str):
            ctx.fail(f"{where} must be a string; got {short(value)}")
        try:
            value.encode("utf-8")
        except UnicodeEncodeError:
            ctx.fail(f"{where} must be Unicode text; got {short(value)}")
        if meta["choices"] is not None and value not in meta["choices"]:
            close = difflib.get_close_matches(value, meta["choices"], n=1, cutoff=0.6)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            ctx.fail(f"{where} must be one of {', '.join(map(repr, meta['choices']))}; "
                     f"got {short(value)}{hint}")
        return value
    if kind == "vec3":
        return tuple(number_list(value, where, ctx, meta, length=3))
    if kind == "distribution":
        return _distribution(value, where, ctx, meta)
    if kind == "path":
        if not isinstance(value, str) or not value:
            ctx.fail(f"{where} must be a file path string; got {short(value)}")
        if len(value) > MAX_PATH_CHARS or "\0" in value:
            ctx.fail(f"{where} must be a file path of at most {MAX_PATH_CHARS} characters; "
                     f"got {value[:40]!r}...")
        try:
            value.encode("utf-8")
            p = Path(value)
            full = p if p.is_absolute() else (ctx.base_dir / p).resolve()
            base = ctx.base_dir.resolve()
            full.stat()
        except FileNotFoundError:
            pass       # reported by the reader, which says what the file should hold
        except (OSError, RuntimeError, UnicodeEncodeError) as exc:
            reason = getattr(exc, "strerror", None) or type(exc).__name__
            ctx.fail(f"{where} = {short(value)}: cannot use this path ({reason})")
        if p.is_absolute():
            return str(p)
        if not full.is_relative_to(base):
            ctx.fail(f"{where} = {value!r} leads out of the case file's folder {base}; a relative "
                     "path must stay inside it (give an absolute path to use a file elsewhere)")
        return str(full)
    if kind == "table":
        default = f.default
        return parse_section(type(default), value, where, ctx)
    raise AssertionError(kind)


def public_fields(cls):
    return [f for f in fields(cls) if not f.metadata.get("internal") and f.metadata.get("kind") != "bodies"]


def parse_section(cls, table, where: str, ctx, extra=None):
    if not isinstance(table, dict):
        ctx.fail(f"[{where}] must be a table of keys; got {short(table)}")
    fl = public_fields(cls)
    reject_unknown(table, [f.name for f in fl], where, ctx)
    kwargs = dict(extra or {})
    for f in fl:
        if f.name in table:
            kwargs[f.name] = _convert(f, table[f.name], f"{where}.{f.name}" if where else f.name, ctx)
        elif f.default is dataclasses.MISSING:
            ctx.fail(f"{where}: missing key '{f.name}'{unit_text(f.metadata)} ({f.metadata['doc']})")
    obj = cls(**kwargs)
    hook = getattr(obj, "after_parse", None)
    return hook(table, where, ctx) if hook else obj


def plain_value(v, relative_to=None):
    if isinstance(v, Distribution):
        if v.law == "constant":
            return v.value
        if v.law == "table":
            return {"law": "table", "eta": list(v.eta), "values": list(v.values)}
        keys = {"linear": ("root", "tip"), "elliptic": ("root",)}[v.law]
        return {"law": v.law, **{k: getattr(v, k) for k in keys}}
    if dataclasses.is_dataclass(v):
        return to_plain(v, relative_to)
    if isinstance(v, tuple):
        return list(v)
    return v


def to_plain(obj, relative_to=None) -> dict:
    """A section (or the case) as nested plain values; file paths inside the folder
    ``relative_to`` are written relative to it (POSIX ``/``), others as they are."""
    out = {}
    omit = obj.omitted() if hasattr(obj, "omitted") else set()
    for f in fields(obj):
        if f.metadata.get("internal") or f.name in omit:
            continue
        v = getattr(obj, f.name)
        if f.metadata.get("kind") == "bodies":
            out["bodies"] = {b.name: to_plain(b, relative_to) for b in v}
        elif f.metadata.get("kind") == "path" and v is not None and relative_to is not None:
            root, full = Path(relative_to).resolve(), Path(v).resolve()
            out[f.name] = full.relative_to(root).as_posix() if full.is_relative_to(root) else v
        elif v is not None:
            out[f.name] = plain_value(v, relative_to)
    return out


def tidy(value: float) -> float:
    """A worked-out default without float noise: the nearest number of at most 10 significant
    digits when it lies within 1e-12 (relative) of ``value``, else ``value`` itself.

    The resolved case holds the tidied value, so the run uses exactly what its case.toml says.

    Examples
    --------
    >>> tidy(0.1 * 0.2), tidy(0.8999999999999998), tidy(10.0 / 7200.0)
    (0.02, 0.9, 0.001388888888888889)
    """
    near = float(f"{value:.10g}")
    return near if abs(near - value) <= 1e-12 * abs(value) else value


def dump_toml(data: dict, header: str = "") -> str:
    """``data`` (nested plain values, as :func:`to_plain` gives) as TOML text, after a
    ``#`` comment block holding ``header``."""
    comment = "".join(f"# {h}\n" for h in header.splitlines()) if header else ""
    return comment + ("\n" if comment else "") + tomli_w.dumps(data)


def plain_default(value) -> str:
    """A key's default as it is written in a case file, on one line (for the key reference)."""
    return _inline(plain_value(value))


def _inline(v) -> str:
    if isinstance(v, list):
        return "[" + ", ".join(_inline(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_inline(x)}" for k, x in v.items()) + "}"
    return tomli_w.dumps({"x": v})[len("x = "):].strip()   # scalars as tomli-w writes them


def accepted_text(meta) -> str:
    if meta.get("choices"):
        return ", ".join(f"`{c}`" for c in meta["choices"])
    parts = []
    above, lo = meta.get("above"), meta.get("minimum")
    if above is not None and not (lo is not None and lo > above):
        parts.append(f"> {above:g}")
    if lo is not None:
        parts.append(f">= {lo:g}")
    if meta.get("maximum") is not None:
        parts.append(f"<= {meta['maximum']:g}")
    if meta.get("allow_inf"):
        parts.append("or `inf`")
    kind = meta.get("kind")
    extra = {"vec3": "3 numbers", "distribution": "number or law table", "path": "file path",
             "bool": "true/false", "int": "integer"}.get(kind)
    if kind == "vec3" and parts:
        return "3 numbers, each " + ", ".join(parts)
    if extra:
        parts.insert(0, extra)
    return ", ".join(parts)
