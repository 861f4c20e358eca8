"""Every load with its numerical uncertainty: a refinement study of a case, its levels run on Dask.

The case as given is the finest of three levels; the two others are
coarsened from it by a refinement ratio r (``DEFAULT_RATIO`` = sqrt 2 unless
one is given, at least ``MIN_RATIO`` = 1.3 as Celik et al. 2008 recommend).
What drives the answer is coarsened together, by one spacing factor
h_K / h_1 per level:

- the strips of every body (a wing's spanwise panels and, for a vortex
  lattice, its chordwise panels; a rotor's strips per blade), rounded to
  whole numbers, each level at least ``MIN_RATIO`` coarser than the next
  finer one; the spacing factor is the ratio of the levels' strip totals;
- the time step (so a rotor's blade turn per step, and the length of a wake
  panel), by the same factor; the number of steps so that the run lasts at
  least as long: the physical wake length, its cut-off age, its roll-up age
  and its core radius stay the case's;
- the near wake kept as filaments before particles (``[wake]
  near_wake_steps``), to the same length.

The levels run as the points of a zipped sweep (:func:`wakes.sweep.sweep`:
a local Dask cluster by default, or a scheduler's workers), each into its
own run folder under ``OUT/levels/``, so no level's work is lost; a
finished level is reused when the study is run again. For every load of
every body's summary (not the case's inputs, :data:`NOT_LOADS`)
:func:`wakes.uncertainty.refinement_estimate` gives the
Richardson-extrapolated value, the observed order, the Grid Convergence
Index band (Roache 1994, 1998; Celik et al. 2008; safety factor 1.25) and
the convergence class (Stern et al. 2001); a load that does not converge
monotonically, or at an observed order above twice ``SCHEME_ORDER``, or
whose levels differ by less than a noise floor (a rotor's thrust change
from one revolution to the next, the treecode's tolerance, round-off),
gets no band, and the study says why. :func:`sweep_study` does the same
for every point of a sweep.

The study folder ``OUT`` holds ``summary.json`` (the finest level's, with
an ``uncertainty`` entry), ``uncertainty.csv`` (:func:`uncertainty_table`),
``plots/uncertainty.png`` and ``levels/`` (one run folder per level and the
levels' ``sweep.csv``).

What is not refined: the wake's cut-off (its length is a model choice here,
not a spacing), a finite core radius, the treecode's tolerance (an error
floor the case sets: differences between levels within it are not
resolved) and the solver's tolerance.
"""

from __future__ import annotations

import copy
import json
import math
import os
import time
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .budget import budget_bytes
from .case import Case, apply_settings, parse_case, read_toml
from .errors import CaseError, InputError, MemoryBudgetError, WakesError
from .estimate import duration, estimate_case
from .io import atomic
from .io.runfolder import clear_run, record_files
from .io.tables import write_json
from .plots import STUDY_FIGURE, STUDY_TABLE, UNCERTAINTY_PANELS, save_figure, sweep_figure, uncertainty_figure
from .run import check_new_folder, split_unit
from .sweep import plan, sweep
from .uncertainty import MONOTONIC, ROUND_OFF, SAFETY_FACTOR_THREE_LEVELS, refinement_estimate

DEFAULT_RATIO = math.sqrt(2.0)   # refinement ratio between levels, our default
MIN_RATIO = 1.3                  # Celik et al. (2008) recommend r > 1.3
MAX_RATIO = 2.0                  # our bound: coarser levels soon leave the asymptotic range
LEVELS = 3
LEVELS_FOLDER = "levels"
#: Observed orders are accepted from 0 to twice this (ours): the strips converge at second order
#: at best (cosine spacing, section points at the angle midpoints) and the time march at first, so a
#: higher observed order says the levels are not in the asymptotic range (e.g. a sum of parts
#: converging from opposite sides), and its band would be too narrow.
SCHEME_ORDER = 2.0
#: A body's relative change of its loads over its last revolution (rotors): how far the time march
#: is from its periodic state, an iteration error in the sense of Celik et al. (2008). Its largest
#: size over the levels, times a load, is the noise nu of each level's value (ours).
PERIODIC_CHANGE = "thrust_change_last_revolution"
#: How well the observed order must be known for a band, as the issue's checks ask of it (absolute).
#: Values uncertain by nu make each difference uncertain by 2 nu, and p = ln(e32/e21)/ln r then by
#: up to 4 nu / (|e21| ln r) (ours, derived, with e21 the smaller difference); so the differences
#: between levels must exceed 4 nu / (ORDER_ACCURACY ln r), about 38 nu at r = sqrt 2, or they are
#: "unresolved".
ORDER_ACCURACY = 0.3
#: Summary figures that are the case's inputs or bookkeeping, not loads: given no band.
NOT_LOADS = frozenset({"revolutions", "averaged_steps", "solidity", "collective_deg", "pitch_075R_deg",
                       "thrust_change_last_revolution", "mu", "J", "tip_speed_ratio", "advance_ratio",
                       "flap_frequency_ratio", "lock_number"})


@dataclass(frozen=True)
class Level:
    """One level of a refinement study.

    Attributes
    ----------
    number : int
        1 for the finest (the case as given), 2, 3 coarser.
    spacing : float
        h_K / h_1, the level's spacing relative to the finest (1 for the finest).
    settings : dict
        The dotted case keys this level sets and their values.
    case : wakes.case.Case
        The level's resolved case.
    """

    number: int
    spacing: float
    settings: dict
    case: Case

    @property
    def words(self) -> str:
        """E.g. ``"level 3 (coarsest, spacing 2 x the case's)"``."""
        which = "the case as given" if self.number == 1 else f"spacing {self.spacing:.3g} x the case's"
        where = {1: "finest, "}.get(self.number, "coarsest, " if self.number == LEVELS else "")
        return f"level {self.number} ({where}{which})"


class LevelFailed(WakesError):
    """A level of a refinement study did not finish; the others' folders are kept."""


def _half_up(x: float) -> int:
    return int(math.floor(x + 0.5))


def _check_ratio(ratio) -> float:
    if isinstance(ratio, bool) or not isinstance(ratio, (int, float)) or not (
            math.isfinite(ratio) and MIN_RATIO <= ratio <= MAX_RATIO):
        raise InputError(f"the refinement ratio must be a number from {MIN_RATIO:g} to {MAX_RATIO:g} "
                         f"(Celik et al. 2008 recommend more than 1.3); got {ratio!r}")
    return float(ratio)


def _set(data: dict, key: str, value) -> dict:
    node = data
    parts = key.split(".")
    for p in parts[:-1]:
        node = node.setdefault(p, {})
    node[parts[-1]] = value
    return data


def plan_levels(raw: dict, *, source: str = "<dict>", base_dir=".", ratio: float = DEFAULT_RATIO) -> list[Level]:
    """The levels of a refinement study of a case, each checked as ``wakes check`` would.

    Parameters
    ----------
    raw : dict
        The case as data (a case file's tables, settings applied).
    source : str
        Name in messages (the case file).
    base_dir : path-like
        Folder relative file paths of the case are taken from.
    ratio : float
        Nominal refinement ratio between levels, ``MIN_RATIO`` to ``MAX_RATIO``.

    Returns
    -------
    list of Level
        Finest (the case as given) first.

    Raises
    ------
    wakes.errors.CaseError
        The case itself is not valid, or it is too coarse to coarsen: a level
        would have fewer strips than a body accepts, or a time step the case
        does not accept; the message names the level, the keys it sets and why.
    wakes.errors.InputError
        A ratio out of range.

    Examples
    --------
    >>> from wakes.case import read_toml
    >>> levels = plan_levels(read_toml("cases/validation/elliptic-wing.toml"))
    >>> [(lv.number, lv.settings["bodies.wing.spanwise_panels"], lv.spacing) for lv in levels]
    [(1, 24, 1.0), (2, 17, 1.411764705882353), (3, 12, 2.0)]
    >>> plan_levels({"freestream": {"speed": 10.0}, "bodies": {"wing": {
    ...     "type": "wing", "span": 4.0, "chord": 0.5, "spanwise_panels": 3}}})
    Traceback (most recent call last):
    ...
    wakes.errors.CaseError: <dict>: too coarse for a refinement study with ratio 1.41: level 3 (coarsest, ...
    """
    ratio = _check_ratio(ratio)
    case = parse_case(raw, source=source, base_dir=base_dir)
    counts = {b.name: b.discretization() for b in case.bodies}
    primary = {name: next(iter(c)) for name, c in counts.items()}
    strips = [{name: c[primary[name]] for name, c in counts.items()}]
    for k in range(1, LEVELS):
        strips.append({name: min(_half_up(n0 / ratio ** k), int(math.floor(strips[-1][name] / MIN_RATIO + 1e-9)))
                       for name, n0 in strips[0].items()})
    total0 = sum(strips[0].values())
    levels = []
    for k, level_strips in enumerate(strips):
        total = sum(level_strips.values())
        spacing = total0 / total if total > 0 else math.inf
        settings = {"time.dt": case.time.dt * spacing,     # exactly the case's at the finest level
                    "time.steps": max(1, math.ceil(case.time.steps / spacing - 1e-9))}
        for name, c in counts.items():
            for key, n in c.items():
                value = level_strips[name] if key == primary[name] else max(1, _half_up(n / spacing))
                settings[f"bodies.{name}.{key}"] = value
        if case.wake.model == "particles":
            settings["wake.near_wake_steps"] = max(1, _half_up(case.wake.near_wake_steps / spacing))
        data = copy.deepcopy(raw)
        for key, value in settings.items():
            _set(data, key, value)
        level = Level(k + 1, spacing, settings, None)
        try:
            if not math.isfinite(spacing):
                raise CaseError("no strips are left")
            level_case = parse_case(data, source=source, base_dir=base_dir)
        except CaseError as exc:
            sets = ", ".join(f"{key} = {v:g}" for key, v in settings.items())
            raise CaseError(f"{source}: too coarse for a refinement study with ratio {ratio:.3g}: "
                            f"{level.words} sets {sets}, and then {exc}; refine the case (more strips, "
                            "a smaller time step) so that its coarsest level is still valid") from None
        levels.append(Level(k + 1, spacing, settings, level_case))
    return levels


def check_levels_budget(levels: list[Level], max_memory: int | None = None, at_once: int = LEVELS) -> list:
    """Refuse a study whose levels, run ``at_once`` at a time here, would exceed the memory budget.

    Returns
    -------
    list of wakes.estimate.Estimate
        The estimate of each level, finest first.

    Raises
    ------
    wakes.errors.MemoryBudgetError
        Naming the levels, their memory and the budget.
    """
    estimates = [estimate_case(lv.case, pair_rate=1.0) for lv in levels]
    need = [int(e.memory_mb * 1e6) for e in estimates]
    limit, where = budget_bytes(max_memory)
    together = sorted(range(len(levels)), key=lambda i: -need[i])[:max(1, at_once)]
    total = sum(need[i] for i in together)
    if limit is not None and total > limit:
        named = ", ".join(f"{levels[i].words} about {need[i] / 2 ** 30:.3g} GiB" for i in sorted(together))
        raise MemoryBudgetError(
            f"the refinement study would need about {total / 2 ** 30:.3g} GiB with {len(together)} "
            f"level{'s' if len(together) > 1 else ''} running at once ({named}), but {where} is "
            f"{limit / 2 ** 30:.3g} GiB; run fewer workers at once (--workers 1), coarsen the case, or "
            "raise --max-memory")
    return estimates


def level_lines(levels: list[Level], estimates=None, pair_rate: float | None = None) -> list[str]:
    """The levels as lines for the terminal: the keys each sets (and its estimate).

    Parameters
    ----------
    levels : list of Level
    estimates : list of wakes.estimate.Estimate, optional
        Each level's, made with ``pair_rate=1`` (:func:`check_levels_budget`):
        memory and weighted pairs.
    pair_rate : float, optional
        Pairs per second of one worker thread [1/s]: adds each level's run time.
    """
    lines = []
    for i, lv in enumerate(levels):
        sets = ", ".join(f"{k.split('.')[-1]} {v:g}" for k, v in lv.settings.items())
        more = ""
        if estimates is not None:
            e = estimates[i]
            more = f"; about {e.memory_mb:,.0f} MB, {e.pair_evaluations:.3g} Biot-Savart pairs"
            if pair_rate:
                more += f", about {duration(e.run_time_s / pair_rate)} on one worker"
        lines.append(f"  {lv.words}: {sets}{more}")
    return lines


def estimate_loads(summaries: list[dict], spacings) -> dict:
    """Refinement estimate of every load of every body from the levels' summaries.

    Parameters
    ----------
    summaries : list of dict
        The levels' ``summary.json`` contents, finest first.
    spacings : array_like, shape (n,)
        Their spacings h_K / h_1.

    Returns
    -------
    dict
        ``{body: {load: RefinementEstimate}}`` for every numeric summary
        figure not in :data:`NOT_LOADS`, finite at every level and not the
        same at every level (such a figure is an input of the case). Where a
        body reports :data:`PERIODIC_CHANGE`, each level's value is taken
        as uncertain by the largest such change times the load's size (or by
        the levels' treecode tolerance, ``[wake] induction_tolerance`` where
        ``induction`` may choose the tree, read from ``summary["case"]``, if
        larger; at least by round-off, ``ROUND_OFF``, of the body's largest
        figure in the same unit: a hover rotor's hub force, zero by
        symmetry, against its thrust); differences between levels within
        4 / (``ORDER_ACCURACY`` ln r) times that are ``"unresolved"``.
        An observed order above twice ``SCHEME_ORDER`` gets no band.

    Examples
    --------
    >>> s = [{"bodies": {"w": {"CL": 0.5 - 0.01 * h ** 2, "revolutions": 3.0}}} for h in (1, 1.5, 2.25)]
    >>> est = estimate_loads(s, [1, 1.5, 2.25])["w"]
    >>> list(est), round(est["CL"].order, 6), round(est["CL"].extrapolated, 9)
    (['CL'], 2.0, 0.5)
    """
    h = np.sort(np.asarray(spacings, dtype=np.float64))
    margin = 4.0 / (ORDER_ACCURACY * float(np.log(h[1:] / h[:-1]).min()))
    out = {}
    for body, figures in summaries[0]["bodies"].items():
        out[body] = {}
        changes = [s["bodies"][body].get(PERIODIC_CHANGE) for s in summaries]
        drift = max((abs(c) for c in changes if c is not None and math.isfinite(c)), default=0.0)
        drift = max(drift, _tree_tolerance(summaries))
        scale = {}   # largest |figure| of each unit: round-off of a load zero by symmetry is relative to it
        for key, value in figures.items():
            if key not in NOT_LOADS and not isinstance(value, bool) and isinstance(value, (int, float)) \
                    and math.isfinite(value):
                unit = split_unit(key)[1]
                scale[unit] = max(scale.get(unit, 0.0), abs(value))
        for key, value in figures.items():
            if key in NOT_LOADS or isinstance(value, bool) or not isinstance(value, (int, float)):
                continue
            values = [s["bodies"][body].get(key) for s in summaries]
            if any(v is None or not math.isfinite(v) for v in values) or len(set(values)) == 1:
                continue
            noise = margin * max(drift * max(map(abs, values)), ROUND_OFF * scale[split_unit(key)[1]])
            out[body][key] = refinement_estimate(values, spacings, noise=noise, expected_order=SCHEME_ORDER,
                                                 order_tolerance=1.0)
    return out


def _tree_tolerance(summaries: list[dict]) -> float:
    """The largest relative velocity error a level's treecode was allowed (0 for direct sums)."""
    out = 0.0
    for s in summaries:
        wake = s.get("case", {}).get("wake", {})
        if wake.get("induction", "direct") != "direct":   # "tree", or "auto" that may choose it
            out = max(out, float(wake.get("induction_tolerance", 0.0)))
    return out


def uncertainty_table(estimates: dict, values: dict, spacings) -> pd.DataFrame:
    """The study's table (``uncertainty.csv``): one row per body and load.

    Columns: ``body``, ``quantity``, ``value`` (finest level), ``extrapolated``,
    ``uncertainty`` (the band's half-width, the quantity's units),
    ``relative_uncertainty`` (of |value|), ``order``, ``convergence``,
    ``note`` (why there is no band), then ``spacing_K`` and ``level_K``
    (the value) of each level K, 1 the finest. Missing numbers are NaN.
    """
    rows = []
    for body, loads in estimates.items():
        for key, est in loads.items():
            row = {"body": body, "quantity": key, "value": est.value,
                   "extrapolated": _num(est.extrapolated), "uncertainty": _num(est.uncertainty),
                   "relative_uncertainty": _num(est.gci), "order": _num(est.order),
                   "convergence": est.convergence, "note": est.reason}
            for k, (h, v) in enumerate(zip(spacings, values[body][key]), start=1):
                row[f"spacing_{k}"] = float(h)
                row[f"level_{k}"] = float(v)
            rows.append(row)
    return pd.DataFrame(rows)


def _num(x) -> float:
    return float("nan") if x is None else float(x)


def band_text(row) -> str:
    """A load as ``value ± band (relative)``, or the value and why it has no band.

    Examples
    --------
    >>> band_text({"value": 0.43831, "uncertainty": 0.00068, "relative_uncertainty": 0.00156,
    ...            "convergence": "monotonic"})
    '0.43831 ± 0.00068 (0.16 %)'
    >>> band_text({"value": 0.1, "uncertainty": float("nan"), "relative_uncertainty": float("nan"),
    ...            "convergence": "oscillatory"})
    '0.1 (no band: oscillatory, cannot be trusted)'
    """
    u = row["uncertainty"]
    if row["convergence"] == MONOTONIC and (u is None or not math.isfinite(u)):
        return f"{row['value']:.5g} (no band: observed order out of range, cannot be trusted)"
    if row["convergence"] != MONOTONIC:
        return f"{row['value']:.5g} (no band: {row['convergence']}, cannot be trusted)"
    rel = row["relative_uncertainty"]
    rel_text = f" ({100 * rel:.2g} %)" if rel is not None and math.isfinite(rel) else ""
    return f"{row['value']:.5g} ± {u:.2g}{rel_text}"


def result_lines(table: pd.DataFrame) -> list[str]:
    """The study's table as lines for the terminal: value ± band, order and convergence."""
    cells = [("body", "quantity", "value ± band", "extrapolated", "order")]
    for _, r in table.iterrows():
        ext = "-" if not math.isfinite(r["extrapolated"]) else f"{r['extrapolated']:.5g}"
        order = "-" if not math.isfinite(r["order"]) else f"{r['order']:.2f}"
        cells.append((r["body"], r["quantity"], band_text(r), ext, order))
    widths = [max(len(c[i]) for c in cells) for i in range(len(cells[0]))]
    return ["  ".join(c.ljust(w) for c, w in zip(row, widths)).rstrip() for row in cells]


@dataclass(frozen=True)
class Study:
    """A finished refinement study.

    Attributes
    ----------
    out : Path
        The study folder.
    levels : list of Level
        Finest first.
    table : pandas.DataFrame
        ``uncertainty.csv`` (:func:`uncertainty_table`).
    summary : dict
        ``summary.json``: the finest level's summary with an ``uncertainty`` entry.
    estimates : dict
        ``{body: {load: wakes.uncertainty.RefinementEstimate}}``.
    """

    out: Path
    levels: list
    table: pd.DataFrame
    summary: dict
    estimates: dict


def _read_case(case, settings):
    if isinstance(case, (str, Path)):
        return str(case), str(Path(case).resolve().parent), apply_settings(read_toml(case), settings)
    if isinstance(case, dict):
        return "<dict>", str(Path.cwd()), apply_settings(case, settings)
    raise InputError(f"case must be a case file path or a dict; got {type(case).__name__}")


def prepare(case, *, settings=(), ratio: float = DEFAULT_RATIO, max_memory: int | None = None,
            workers: int | None = None, remote: bool = False):
    """The levels of a study, checked against the schema and the memory budget, before anything runs.

    Returns
    -------
    (levels, estimates)
        The levels (:func:`plan_levels`) and their cost estimates.
    """
    source, base_dir, raw = _read_case(case, settings)
    levels = plan_levels(raw, source=source, base_dir=base_dir, ratio=ratio)
    at_once = 1 if remote else min(LEVELS, workers or os.cpu_count() or 1)
    return levels, check_levels_budget(levels, max_memory, at_once)


def refinement_study(case, out, *, settings=(), ratio: float = DEFAULT_RATIO, client=None,
                     scheduler: str | None = None, workers: int | None = None, overwrite: bool = False,
                     plots: bool = True, max_memory: int | None = None, progress: bool = False) -> Study:
    """Run a case at three refinement levels on Dask and give every load with its uncertainty band.

    Parameters
    ----------
    case : str, Path or dict
        A case file, or a case as data (relative paths then from the current folder).
        It is the finest level.
    out : path-like
        The study folder (empty unless ``overwrite``).
    settings : sequence of str
        ``KEY=VALUE`` case keys set first (as ``--set``).
    ratio : float
        Nominal refinement ratio between levels (default sqrt 2).
    client : dask.distributed.Client, optional
        Run the levels with this client; else on the scheduler at ``scheduler``,
        or on a local cluster of ``workers`` processes (default one per core).
    overwrite : bool
        Remove what an earlier study wrote in ``out`` (its levels' finished
        run folders are kept and reused).
    plots : bool
        Draw ``plots/uncertainty.png``.
    max_memory : int, optional
        Memory budget [B] for the levels running at once here (default: the
        memory available).
    progress : bool
        A progress line on standard error.

    Returns
    -------
    Study

    Raises
    ------
    wakes.errors.CaseError
        Before anything runs: a bad case, or one too coarse to coarsen (:func:`plan_levels`).
    wakes.errors.MemoryBudgetError
        Before anything runs: the levels would not fit the memory budget.
    LevelFailed
        A level did not finish (the finished levels' folders are kept).
    wakes.sweep.SweepStopped
        Ctrl-C.

    Examples
    --------
    The demo glider (20, 14 and 10 strips) for 20 steps, its levels on a
    Dask worker that is a thread of this process:

    >>> import distributed
    >>> with (distributed.LocalCluster(processes=False, n_workers=1, dashboard_address=None) as cluster,
    ...       distributed.Client(cluster) as client):
    ...     study = refinement_study("cases/survey-glider.toml", "glider-study", settings=["time.steps=20"],
    ...                              client=client)
    >>> [lv.settings["bodies.wing.spanwise_panels"] for lv in study.levels]
    [20, 14, 10]
    >>> cl = study.summary["uncertainty"]["bodies"]["wing"]["CL"]
    >>> cl["convergence"], cl["value"] == study.summary["bodies"]["wing"]["CL"]
    ('monotonic', True)
    """
    remote = client is not None or bool(scheduler)
    levels, _ = prepare(case, settings=settings, ratio=ratio, max_memory=max_memory, workers=workers,
                        remote=remote)
    out = check_new_folder(out, overwrite)
    if overwrite:
        clear_run(out)
    vary = {key: [lv.settings[key] for lv in levels] for key in levels[0].settings}
    start = time.perf_counter()
    table = sweep(case, vary, out=out / LEVELS_FOLDER, settings=settings, zipped=True, client=client,
                  scheduler=scheduler, workers=workers, progress=progress)
    failed = [f"  {lv.words}: {row['error']} ({row['folder']})"
              for lv, (_, row) in zip(levels, table.iterrows()) if row["status"] == "failed"]
    if failed:
        raise LevelFailed(f"the refinement study has no estimate: {len(failed)} of {len(levels)} levels "
                          "failed:\n" + "\n".join(failed)
                          + f"\nthe levels that finished are kept in {out / LEVELS_FOLDER}; run the same "
                          "study again with --overwrite to go on (finished levels are reused)")
    summaries = [json.loads((Path(f) / "summary.json").read_text(encoding="utf-8")) for f in table["folder"]]
    spacings = [lv.spacing for lv in levels]
    estimates = estimate_loads(summaries, spacings)
    values = {body: {key: [s["bodies"][body][key] for s in summaries] for key in loads}
              for body, loads in estimates.items()}
    result = uncertainty_table(estimates, values, spacings)
    summary = dict(summaries[0])
    summary["case"] = _case_from(summary.get("case", {}), Path(table["folder"].iloc[0]), out)
    summary["uncertainty"] = _summary_entry(levels, table, summaries, estimates, out)
    summary["uncertainty"]["wall_time_s"] = time.perf_counter() - start
    paths = [out / "summary.json", out / STUDY_TABLE]
    write_json(summary, paths[0])
    atomic.write_text(paths[1], result.to_csv(index=False, float_format="%.10g"))
    if plots:
        fig = uncertainty_figure(result)
        if fig is not None:
            (out / "plots").mkdir(exist_ok=True)
            paths.append(save_figure(fig, out / "plots" / STUDY_FIGURE))
    record_files(out, paths)
    return Study(out, levels, result, summary, estimates)


def _case_from(case: dict, level: Path, out: Path) -> dict:
    """The finest level's case as its summary holds it, with the polar tables it names relative to
    its folder named relative to the study folder (where they are: the level folder's copies)."""
    case = copy.deepcopy(case)
    where = level.resolve().relative_to(out.resolve())
    for body in case.get("bodies", {}).values():
        airfoil = body.get("airfoil", {})
        if isinstance(airfoil.get("polar"), str) and not Path(airfoil["polar"]).is_absolute():
            airfoil["polar"] = (where / airfoil["polar"]).as_posix()
    return case


def _summary_entry(levels, table, summaries, estimates, out: Path) -> dict:
    """``summary.json``'s ``uncertainty``: how the study was made and every load's estimate."""
    def load(est):
        return {"value": est.value, "extrapolated": est.extrapolated,
                "uncertainty": {"absolute": est.uncertainty, "relative": est.gci},
                "order": est.order, "convergence": est.convergence, "trusted": est.trusted,
                "note": est.reason}

    return {
        "method": "Richardson extrapolation and Grid Convergence Index (Roache 1994, 1998; Celik et al. "
                  "2008), convergence class of Stern et al. 2001",
        "safety_factor": SAFETY_FACTOR_THREE_LEVELS,
        "ratios": [b.spacing / a.spacing for a, b in zip(levels, levels[1:])],
        "levels": [{"level": lv.number, "spacing": lv.spacing, "settings": lv.settings,
                    "folder": Path(f).resolve().relative_to(out.resolve()).as_posix(),
                    "wall_time_s": s.get("run", {}).get("wall_time_s")}
                   for lv, f, s in zip(levels, table["folder"], summaries)],
        "bodies": {body: {key: load(est) for key, est in loads.items()} for body, loads in estimates.items()},
    }


def ratio_words(levels: list[Level]) -> str:
    """The ratios between consecutive levels, e.g. ``"1.41, 1.42"``."""
    h = np.array([lv.spacing for lv in levels])
    return ", ".join(f"{r:.3g}" for r in h[1:] / h[:-1])


def _resolved_value(case: Case, key: str):
    """The value of a dotted key in a resolved case (``bodies.NAME.KEY`` through its body)."""
    parts = key.split(".")
    node = case.body(parts[1]) if parts[0] == "bodies" else getattr(case, parts[0])
    for part in parts[2 if parts[0] == "bodies" else 1:]:
        node = getattr(node, part)
    return node


def sweep_study(case, vary: dict, *, out="sweep", settings=(), zipped: bool = False,
                ratio: float = DEFAULT_RATIO, client=None, scheduler: str | None = None,
                workers: int | None = None, max_memory: int | None = None,
                progress: bool = False) -> pd.DataFrame:
    """A sweep whose every point is a refinement study: each load with its band, per point.

    Every point of the grid (:func:`wakes.sweep.plan`) gets its three levels
    (:func:`plan_levels`, the point as the finest); all levels of all points
    run as one zipped sweep into ``out/levels/``, so they share the workers.

    Parameters
    ----------
    case, vary, out, settings, zipped, client, scheduler, workers, progress
        As for :func:`wakes.sweep.sweep`.
    ratio : float
        Nominal refinement ratio between levels (default sqrt 2).
    max_memory : int, optional
        Memory budget [B] for the levels running at once here.

    Returns
    -------
    pandas.DataFrame
        ``out/sweep.csv``: one row per point with the varied keys, ``status``
        ("ran" when its three levels finished, else "failed"), ``error``,
        ``folder`` (its finest level's) and, for every load, its finest value
        (named as in a sweep table) and ``LOAD_extrapolated``,
        ``LOAD_uncertainty``, ``LOAD_relative_uncertainty``, ``LOAD_order``,
        ``LOAD_convergence``.

    Raises
    ------
    wakes.errors.CaseError
        Before anything runs: a bad point, or a point too coarse to coarsen
        (named with its values and level).
    wakes.errors.MemoryBudgetError
        Before anything runs.

    Examples
    --------
    >>> import distributed
    >>> with (distributed.LocalCluster(processes=False, n_workers=1, dashboard_address=None) as cluster,
    ...       distributed.Client(cluster) as client):
    ...     table = sweep_study("cases/survey-glider.toml", {"freestream.angle_of_attack": [2, 4]},
    ...                         out="glider-sweep-study", settings=["time.steps=20"], client=client)
    >>> list(table["status"]), list(table["CL_convergence"])
    (['ran', 'ran'], ['monotonic', 'monotonic'])
    """
    source, base_dir, raw = _read_case(case, settings)
    out = Path(out)
    points = plan(raw, vary, out, source=source, base_dir=base_dir, zipped=zipped)
    level_sets = []
    for p in points:
        try:
            level_sets.append(plan_levels(p.data, source=source, base_dir=base_dir, ratio=ratio))
        except CaseError as exc:
            label = ", ".join(f"{k}={v!r}" for k, v in p.values.items())
            raise CaseError(f"sweep point {p.index} ({label}): {exc}; nothing was run") from None
    flat_levels = [lv for levels in level_sets for lv in levels]
    remote = client is not None or bool(scheduler)
    check_levels_budget(flat_levels, max_memory,
                        1 if remote else min(len(flat_levels), workers or os.cpu_count() or 1))
    keys = list(dict.fromkeys([*vary, *(k for lv in flat_levels for k in lv.settings)]))
    flat = {k: [lv.settings[k] if k in lv.settings else
                p.values[k] if k in p.values else _resolved_value(lv.case, k)
                for p, levels in zip(points, level_sets) for lv in levels] for k in keys}
    runs = sweep(case, flat, out=out / LEVELS_FOLDER, settings=settings, zipped=True, client=client,
                 scheduler=scheduler, workers=workers, progress=progress)
    rows = []
    for i, (p, levels) in enumerate(zip(points, level_sets)):
        mine = runs.iloc[i * LEVELS:(i + 1) * LEVELS]
        row = {**p.values, "status": "ran", "error": "", "folder": mine["folder"].iloc[0]}
        bad = mine[~mine["status"].isin(["ran", "reused"])]
        if len(bad):
            row.update(status="failed", error="; ".join(f"level {k + 1 - i * LEVELS}: {e}"
                                                        for k, e in bad["error"].items()))
            rows.append(row)
            continue
        summaries = [json.loads((Path(f) / "summary.json").read_text(encoding="utf-8")) for f in mine["folder"]]
        estimates = estimate_loads(summaries, [lv.spacing for lv in levels])
        for body, loads in estimates.items():
            prefix = "" if len(estimates) == 1 else f"{body}."
            for key, est in loads.items():
                name = prefix + key
                row.update({name: est.value, f"{name}_extrapolated": _num(est.extrapolated),
                            f"{name}_uncertainty": _num(est.uncertainty),
                            f"{name}_relative_uncertainty": _num(est.gci),
                            f"{name}_order": _num(est.order), f"{name}_convergence": est.convergence})
        rows.append(row)
    table = pd.DataFrame(rows)
    atomic.write_text(out / "sweep.csv", table.to_csv(index=False, float_format="%.10g"))
    fig = sweep_figure(table, next(iter(vary)), raw)
    if fig is not None:
        save_figure(fig, out / "sweep.png")
    return table


def sweep_bands(table: pd.DataFrame, keys: list) -> pd.DataFrame:
    """A study sweep's table for the terminal: the varied keys, status and each main load as value ± band.

    Examples
    --------
    >>> t = pd.DataFrame({"alpha": [2], "status": ["ran"], "CL": [0.2], "CL_uncertainty": [0.001],
    ...                   "CL_relative_uncertainty": [0.005], "CL_convergence": ["monotonic"]})
    >>> print(sweep_bands(t, ["alpha"]).to_string(index=False))
     alpha status                  CL
         2    ran 0.2 ± 0.001 (0.5 %)
    """
    shown = table[[*keys, "status"]].copy()
    for col in table.columns:
        base = col.rpartition(".")[2]
        if base in UNCERTAINTY_PANELS and f"{col}_convergence" in table:
            shown[col] = [band_text({"value": r[col], "uncertainty": r[f"{col}_uncertainty"],
                                     "relative_uncertainty": r[f"{col}_relative_uncertainty"],
                                     "convergence": r[f"{col}_convergence"]}) if r["status"] == "ran" else "-"
                          for _, r in table.iterrows()]
    return shown
