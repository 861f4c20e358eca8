"""The refinement study behind ``wakes run --uncertainty`` (wakes/refinement.py).

The study of the elliptic wing's lifting line (cases/validation/elliptic-wing.toml,
frozen wake, 12 strips, 0.025 s steps, 100 m of wake; levels of 12, 8 and 6
strips, time step coarsened with them) is the one of
tests/validation/test_refinement_wing.py made by the study itself: C_L and
C_Di converge at second order (cosine spacing with section points at the
angle midpoints, DEVELOPERS.md), and their extrapolations lie within 0.1 %
and 0.2 % of Prandtl's closed form (Prandtl 1918; wakes.exact), the model
difference measured in that module.
"""

import json
import shutil
from pathlib import Path

import distributed
import numpy as np
import pandas as pd
import pytest
from wakes import exact
from wakes.case import load_case_with, read_toml
from wakes.cli import main
from wakes.errors import CaseError, InputError
from wakes.refinement import (
    LEVELS_FOLDER,
    PERIODIC_CHANGE,
    LevelFailed,
    band_text,
    estimate_loads,
    plan_levels,
    refinement_study,
    sweep_study,
    uncertainty_table,
)
from wakes.uncertainty import DIVERGENT, MONOTONIC, OSCILLATORY, UNRESOLVED

CASES = Path(__file__).resolve().parents[1] / "cases"
WING = CASES / "validation" / "elliptic-wing.toml"
SMALL = ["wake.motion=frozen", "bodies.wing.spanwise_panels=12", "time.dt=0.025", "time.steps=400"]
CL_PRANDTL = exact.elliptic_wing_lift_slope(8.0) * np.radians(5.0)
CDI_PRANDTL = exact.elliptic_wing_induced_drag(CL_PRANDTL, 8.0)


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    # Workers as threads of this process: the levels load the kernels this process has compiled.
    with (distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                   dashboard_address=None) as cluster,
          distributed.Client(cluster) as client):
        return refinement_study(WING, tmp_path_factory.mktemp("study") / "wing", settings=SMALL,
                                client=client)


def test_levels_coarsen_strips_and_time_step_together(study):
    strips = [lv.settings["bodies.wing.spanwise_panels"] for lv in study.levels]
    assert strips == [12, 8, 6]
    for lv in study.levels:
        assert lv.settings["time.dt"] == pytest.approx(0.025 * lv.spacing, rel=1e-12)
        # the wake is at least as long as the finest level's, by less than one step more
        length = lv.settings["time.steps"] * lv.settings["time.dt"]
        assert 10.0 - 1e-9 <= length < 10.0 + lv.settings["time.dt"]
    assert [lv.spacing for lv in study.levels] == [1.0, 1.5, 2.0]
    # the finest level is the case as given, to the last digit of every resolved key
    assert study.levels[0].case.to_toml() == load_case_with(WING, SMALL).to_toml()


@pytest.mark.parametrize("load, exact_value, rel", [("CL", CL_PRANDTL, 1e-3), ("CDi", CDI_PRANDTL, 2e-3)])
def test_wing_loads_converge_at_second_order_with_a_band(study, load, exact_value, rel):
    est = study.estimates["wing"][load]
    print(f"{load}: {band_text(study.table.set_index('quantity').loc[load])}, order {est.order:.3f}, "
          f"extrapolated {est.extrapolated:.6g}, Prandtl {exact_value:.6g}")
    assert est.convergence == MONOTONIC and est.trusted
    assert abs(est.order - 2.0) <= 0.3
    assert est.extrapolated == pytest.approx(exact_value, rel=rel)
    # the band is the published GCI: Fs |phi2 - phi1| / (r^p - 1)
    r = study.levels[1].spacing
    phi1, phi2 = (study.table.set_index("quantity").loc[load, f"level_{k}"] for k in (1, 2))
    assert est.uncertainty == pytest.approx(1.25 * abs(phi2 - phi1) / (r ** est.order - 1), rel=1e-12)


def test_outputs_hold_every_load_with_its_band(study):
    out = study.out
    summary = json.loads((out / "summary.json").read_text())
    table = pd.read_csv(out / "uncertainty.csv")
    cl = summary["uncertainty"]["bodies"]["wing"]["CL"]
    assert set(cl) >= {"value", "extrapolated", "uncertainty", "order", "convergence"}
    assert set(cl["uncertainty"]) == {"absolute", "relative"}
    assert summary["bodies"]["wing"]["CL"] == cl["value"]     # the finest level's summary
    row = table.set_index("quantity").loc["CL"]
    assert row["extrapolated"] == pytest.approx(cl["extrapolated"], rel=1e-9)
    assert row["uncertainty"] == pytest.approx(cl["uncertainty"]["absolute"], rel=1e-9)
    assert row["relative_uncertainty"] == pytest.approx(cl["uncertainty"]["absolute"] / abs(cl["value"]), rel=1e-9)
    assert (out / "plots" / "uncertainty.png").is_file()
    levels = summary["uncertainty"]["levels"]
    assert [lv["level"] for lv in levels] == [1, 2, 3]
    assert summary["uncertainty"]["wall_time_s"] > 0
    for lv in levels:   # every level's own run folder is kept inside the study folder
        assert lv["folder"].startswith(LEVELS_FOLDER + "/")
        assert (out / lv["folder"] / "loads.csv").is_file()
    assert "revolutions" not in table["quantity"].tolist()


def test_the_study_summary_names_the_polar_relative_to_the_study_folder(tmp_path):
    """The demo glider reads a polar table; the study folder's summary names the finest level's copy."""
    with (distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=1,
                                   dashboard_address=None) as cluster,
          distributed.Client(cluster) as client):
        study = refinement_study(CASES / "survey-glider.toml", tmp_path / "g", client=client, plots=False,
                                 settings=["time.steps=5"])
    polar = study.summary["case"]["bodies"]["wing"]["airfoil"]["polar"]
    assert polar.startswith(LEVELS_FOLDER + "/0000_") and (study.out / polar).is_file()


def test_oscillating_and_diverging_loads_get_no_band():
    """Synthetic series (ours): differences that change sign, and that grow with refinement."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"bodies": {"b": {"CT": 0.005 + 1e-4 * (-1) ** k, "CP": 0.001 + 1e-4 / hk ** 2}}}
                 for k, hk in enumerate(h)]
    est = estimate_loads(summaries, h)["b"]
    assert est["CT"].convergence == OSCILLATORY and not est["CT"].trusted
    assert est["CP"].convergence == DIVERGENT and not est["CP"].trusted
    values = {"b": {k: [s["bodies"]["b"][k] for s in summaries] for k in ("CT", "CP")}}
    table = uncertainty_table({"b": est}, values, h)
    assert table["uncertainty"].isna().all() and table["extrapolated"].isna().all()
    for _, row in table.iterrows():
        assert "no band" in band_text(row) and "±" not in band_text(row)


def test_a_case_too_coarse_to_coarsen_is_refused_naming_the_level():
    raw = read_toml(WING)
    raw["bodies"]["wing"]["spanwise_panels"] = 3
    with pytest.raises(CaseError, match=r"too coarse .* level 3 \(coarsest.*spanwise_panels = 1"):
        plan_levels(raw, source=str(WING))
    with pytest.raises(InputError, match="refinement ratio must be a number from 1.3 to 2"):
        plan_levels(read_toml(WING), ratio=1.2)


def test_rotor_levels_keep_the_blade_turn_within_the_accepted_range():
    """The hover case at 20 deg a step: its coarsest level would turn the blades 40 deg a step."""
    raw = read_toml(CASES / "validation" / "hover-8deg.toml")
    levels = plan_levels(raw)
    assert [lv.settings["bodies.rotor.panels"] for lv in levels] == [16, 11, 8]
    raw["bodies"]["rotor"]["azimuth_step"] = 20.0
    with pytest.raises(CaseError, match=r"level 3 .* 40 deg a step.* at most 30 deg"):
        plan_levels(raw)


def test_cli_refuses_before_anything_runs(tmp_path, capsys):
    args = [str(WING), "--uncertainty", "--set", "bodies.wing.spanwise_panels=3"]
    assert main(["check", *args, "--quiet"]) == 2
    assert "level 3 (coarsest" in capsys.readouterr().err
    assert main(["run", *args, "--out", str(tmp_path / "r")]) == 2
    assert "level 3 (coarsest" in capsys.readouterr().err
    assert main(["run", str(WING), "--uncertainty", "--max-memory", "1M", "--out", str(tmp_path / "m")]) == 4
    assert "refinement study would need" in capsys.readouterr().err
    assert main(["run", str(WING), "--workers", "2", "--out", str(tmp_path / "w")]) == 2
    assert "--uncertainty only" in capsys.readouterr().err
    assert main(["run", "--resume", str(tmp_path), "--uncertainty"]) == 2
    assert "not --resume" in capsys.readouterr().err
    assert not (tmp_path / "r").exists() and not (tmp_path / "m").exists() and not (tmp_path / "w").exists()


def test_check_lists_the_levels(capsys):
    assert main(["check", str(WING), "--uncertainty", "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "refinement study: 3 levels, ratios 1.41, 1.42" in out
    assert "level 3 (coarsest, spacing 2 x the case's): dt 0.05, steps 49, spanwise_panels 12" in out


def test_a_study_run_again_reuses_its_finished_levels(study, tmp_path):
    """--overwrite removes the study's own files; the levels' finished run folders are reused."""
    out = tmp_path / "copy"
    shutil.copytree(study.out, out)      # the fixture's folder stays as the other tests read it
    with (distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=1,
                                   dashboard_address=None) as cluster,
          distributed.Client(cluster) as client):
        again = refinement_study(WING, out, settings=SMALL, client=client, overwrite=True, plots=False)
    status = pd.read_csv(out / LEVELS_FOLDER / "sweep.csv")["status"]
    assert list(status) == ["reused"] * 3
    pd.testing.assert_frame_equal(again.table, study.table)
    assert not (out / "plots" / "uncertainty.png").exists()


def test_differences_within_a_rotors_revolution_to_revolution_change_are_unresolved():
    """Synthetic (ours): C_T converging at second order, the levels 0.125 % and 0.28 % apart, while
    the thrust still changes by 0.1 % from one revolution to the next: to know the order within 0.3
    at r = 1.5 the differences must exceed 4 / (0.3 ln 1.5) = 33 times that; with a change of 1e-5
    (33 times: 0.033 %) they do."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"bodies": {"r": {"CT": 0.005 * (1 + 1e-3 * hk ** 2), PERIODIC_CHANGE: change}}}
                 for hk, change in zip(h, (1e-3, -2e-4, 0.0))]
    est = estimate_loads(summaries, h)["r"]["CT"]
    assert est.convergence == UNRESOLVED and est.uncertainty is None
    for s in summaries:
        s["bodies"]["r"][PERIODIC_CHANGE] = 1e-5
    assert estimate_loads(summaries, h)["r"]["CT"].convergence == MONOTONIC


def test_a_load_zero_by_symmetry_is_unresolved_not_oscillating():
    """Synthetic (ours): an in-plane force of round-off size beside a thrust of 500 N."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"bodies": {"r": {"thrust_N": 500.0 * (1 + 1e-3 * hk ** 2), "H_force_N": 1e-13 * (-1) ** k}}}
                 for k, hk in enumerate(h)]
    est = estimate_loads(summaries, h)["r"]
    assert est["thrust_N"].convergence == MONOTONIC
    assert est["H_force_N"].convergence == UNRESOLVED


def test_an_order_beyond_the_schemes_gets_no_band():
    """Synthetic (ours): differences shrinking at order 6 (a sum of parts converging from two sides
    can look like this); twice the strips' second order is the most accepted."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"bodies": {"w": {"CD": 0.015 + 1e-5 * hk ** 6}}} for hk in h]
    est = estimate_loads(summaries, h)["w"]["CD"]
    assert est.convergence == MONOTONIC and not est.trusted and est.uncertainty is None
    assert "far from the expected" in est.reason


def test_a_sweep_point_too_coarse_to_coarsen_stops_the_sweep_before_it_runs(tmp_path):
    with pytest.raises(CaseError, match=r"sweep point 0 \(bodies.wing.spanwise_panels=3\).*level 3 \(coarsest"):
        sweep_study(WING, {"bodies.wing.spanwise_panels": [3, 12]}, out=tmp_path / "s")
    assert not (tmp_path / "s").exists()
    args = ["sweep", str(WING), "--vary", "bodies.wing.spanwise_panels=3,12", "--uncertainty",
            "--out", str(tmp_path / "c")]
    assert main(args) == 2
    assert not (tmp_path / "c").exists()


def test_differences_within_the_treecode_tolerance_are_unresolved():
    """Synthetic (ours): levels 1e-5 apart, relative, with a treecode allowed 1e-4 of error."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"case": {"wake": {"induction": "tree", "induction_tolerance": 1e-4}},
                  "bodies": {"w": {"CL": 0.5 * (1 + 1e-5 * hk ** 2)}}} for hk in h]
    assert estimate_loads(summaries, h)["w"]["CL"].convergence == UNRESOLVED
    for s in summaries:
        s["case"]["wake"]["induction"] = "direct"
    assert estimate_loads(summaries, h)["w"]["CL"].convergence == MONOTONIC


def test_a_failed_level_is_named_and_the_levels_are_kept(tmp_path):
    """Every level meets an angle past its polar table at the first step."""
    polar = CASES / "polars" / "survey-glider-section.csv"
    with (distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=1,
                                   dashboard_address=None) as cluster,
          distributed.Client(cluster) as client):
        with pytest.raises(LevelFailed, match=r"3 of 3 levels failed:\n  level 1 \(finest.*PolarRangeError"):
            refinement_study(WING, tmp_path / "f", client=client, settings=[
                "time.steps=3", f"bodies.wing.airfoil.polar={polar}", "freestream.angle_of_attack=25"])
    assert len(list((tmp_path / "f" / LEVELS_FOLDER).glob("000*"))) == 3
    assert not (tmp_path / "f" / "summary.json").exists()


def test_wakes_plot_redraws_a_study_folders_figure(study, tmp_path, capsys):
    assert main(["plot", str(study.out), "--out", str(tmp_path / "p")]) == 0
    assert capsys.readouterr().out.strip() == str(tmp_path / "p" / "uncertainty.png")


def test_levels_of_a_lattice_wing_with_particles_and_of_a_case_at_the_turn_limit():
    """A vortex lattice coarsens its chordwise panels too, a particle wake its near-wake rows; the
    propeller of cases/propeller-wing.toml turns 15 deg a step, so its coarsest level's 30 deg (the
    limit) is accepted, not lost to rounding."""
    raw = read_toml(CASES / "survey-glider.toml")
    raw["bodies"]["wing"].update(model="vortex-lattice", chordwise_panels=4)
    raw["wake"].update(model="particles", near_wake_steps=8)
    levels = plan_levels(raw, base_dir=CASES)
    assert [lv.settings["bodies.wing.chordwise_panels"] for lv in levels] == [4, 3, 2]
    assert [lv.settings["wake.near_wake_steps"] for lv in levels] == [8, 6, 4]
    levels = plan_levels(read_toml(CASES / "propeller-wing.toml"), base_dir=CASES)
    assert levels[2].case.time.dt == pytest.approx(2 * levels[0].case.time.dt, rel=1e-15)
