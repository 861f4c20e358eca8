"""Each figure shows the table it claims to show: the data drawn, read back from the
matplotlib artists, equal the CSV of the run folder; labels name bodies and quantities."""

import json
import tomllib

import numpy as np
import pandas as pd
import pytest
from wakes.case import parse_case
from wakes.io.runfolder import read_run
from wakes.plots import (
    QUANTITY_LABELS,
    figures,
    key_label,
    load_panels,
    plot_run,
    sweep_figure,
    uncertainty_figure,
)
from wakes.refinement import estimate_loads, uncertainty_table
from wakes.run import run_case

# A wing with a propeller ahead of it (the shape of cases/propeller-wing.toml, coarser:
# 30 deg steps, 2.5 propeller revolutions), and a two-bladed lift rotor in hover.
MIXED = """
title = "wing and propeller"
[freestream]
speed = 20.0
angle_of_attack = 4.0
[bodies.wing]
type = "wing"
model = "lifting-line"
span = 3.0
chord = 0.3
spanwise_panels = 8
[bodies.propeller]
type = "rotor"
kind = "propeller"
blades = 2
radius = 0.25
root_cutout = 0.04
chord = {law = "linear", root = 0.04, tip = 0.022}
collective = 16.0
twist = {law = "linear", root = 22.0, tip = -4.0}
rpm = 4800.0
axis = [-0.99756, 0.0, 0.06976]
hub = [-0.35, 0.8, 0.0]
panels = 5
azimuth_step = 30.0
wake_revolutions = 1.5
rollup_age = 60.0
[wake]
core = "vatistas2"
core_radius = 0.015
cores_at_surfaces = true
max_age = 0.05
[time]
steps = 30
"""
HOVER = """
title = "hover"
[bodies.lift]
type = "rotor"
blades = 2
radius = 0.5
root_cutout = 0.1
chord = {law = "linear", root = 0.06, tip = 0.04}
collective = 10.0
twist = {law = "linear", root = 0.0, tip = -6.0}
rpm = 1200.0
panels = 6
azimuth_step = 20.0
revolutions = 3.0
wake_revolutions = 1.5
rollup_age = 60.0
[wake]
core = "vatistas2"
core_radius = 0.02
cores_at_surfaces = true
"""


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    base = tmp_path_factory.mktemp("figures")
    out = {}
    for name, text in (("mixed", MIXED), ("hover", HOVER)):
        run = run_case(parse_case(tomllib.loads(text)))
        run.write(base / name)
        out[name] = (read_run(base / name), run)
    return out


def _label_of(text):
    """The loads.csv column an axis label names."""
    return {v: k for k, v in QUANTITY_LABELS.items()}[text]


def _curves(fig):
    return [(ax, line) for ax in fig.axes for line in ax.get_lines()]


def _check_loads_figure(folder):
    loads = pd.read_csv(folder.path / "loads.csv")
    bodies = folder.case["bodies"]
    fig = figures(folder)["loads.png"]
    drawn = {}
    for ax, line in _curves(fig):
        body = line.get_label()
        col = _label_of(ax.get_ylabel())
        mine = loads[loads["body"] == body]
        if bodies[body]["type"] == "rotor":
            x = mine["time_s"] * bodies[body]["rpm"] / 60.0
        else:
            x = mine["time_s"]
        np.testing.assert_allclose(line.get_xdata(), x, rtol=1e-12)
        np.testing.assert_allclose(line.get_ydata(), mine[col], rtol=1e-12)
        drawn.setdefault(body, []).append((col, np.asarray(line.get_ydata(), float)))
    assert set(drawn) == set(loads["body"]) == set(bodies)       # every body appears
    for panels in drawn.values():                                  # no panel repeats another
        for i in range(len(panels)):
            for j in range(i + 1, len(panels)):
                assert not np.allclose(panels[i][1], panels[j][1], rtol=1e-6)
    return {b: [c for c, _ in p] for b, p in drawn.items()}, fig


def test_loads_figure_draws_every_body_of_a_mixed_case(runs):
    folder, _ = runs["mixed"]
    panels, fig = _check_loads_figure(folder)
    assert panels["propeller"] == ["CT", "CP", "efficiency"]
    assert panels["wing"] == ["CL", "CD", "CM"]
    xlabels = sorted(ax.get_xlabel() for ax in fig.axes if ax.get_xlabel())
    assert xlabels == ["revolutions [-]", "simulated time [s]"]
    assert {ax.get_title("left") for ax in fig.axes} >= {"wing (wing)", "propeller (propeller)"}


def test_loads_figure_of_a_lift_rotor_is_coefficients_against_revolutions(runs):
    folder, _ = runs["hover"]
    panels, fig = _check_loads_figure(folder)
    assert panels == {"lift": ["CT", "CP", "FM"]}
    assert [ax.get_xlabel() for ax in fig.axes if ax.get_xlabel()] == ["revolutions [-]"]
    revolutions = folder.summary["bodies"]["lift"]["revolutions"]
    assert max(fig.axes[0].get_lines()[0].get_xdata()) == pytest.approx(revolutions, rel=1e-9)


def test_load_panels_of_a_turbine_and_of_a_rotor_in_forward_flight():
    frame = pd.DataFrame({"CP": [0.4, 0.45], "CT": [0.7, 0.8], "tip_speed_ratio": [6.5, 6.5],
                          "CQ": [0.4, 0.45], "FM": [np.nan, np.nan], "thrust_N": [1.0, 2.0]})
    assert load_panels(frame, "turbine") == ["CP", "CT"]
    assert load_panels(frame, "rotor") == ["CT", "CP"]          # no FM where it is not defined
    assert load_panels(frame[["thrust_N"]], "wing") == ["thrust_N"]


def test_span_loading_figure_is_the_wing_rows_of_sections_csv(runs):
    folder, _ = runs["mixed"]
    sections = pd.read_csv(folder.path / "sections.csv")
    wing = sections[sections["body"] == "wing"].sort_values("y_m")
    fig = figures(folder)["span_loading.png"]
    (a1, l1), (a2, l2) = _curves(fig)
    assert l1.get_label() == l2.get_label() == "wing"
    np.testing.assert_allclose(l1.get_xdata(), wing["y_m"], rtol=1e-12)
    np.testing.assert_allclose(l1.get_ydata(), wing["gamma_m2_s"], rtol=1e-12)
    np.testing.assert_allclose(l2.get_ydata(), wing["cl"], rtol=1e-12)
    assert a1.get_ylabel() == "circulation Γ [m²/s]" and a2.get_xlabel() == "spanwise position y [m]"


@pytest.mark.parametrize("name, body", [("mixed", "propeller"), ("hover", "lift")])
def test_radial_loading_figure_is_radial_loading_csv_labelled_by_body(runs, name, body):
    folder, _ = runs[name]
    table = pd.read_csv(folder.path / "radial_loading.csv")
    fig = figures(folder)["radial_loading.png"]
    curves = _curves(fig)
    assert [line.get_label() for _, line in curves] == [body] * 3
    for (_, line), col in zip(curves, ("gamma_m2_s", "cl", "dT_dr_N_per_m")):
        np.testing.assert_allclose(line.get_xdata(), table["r_over_R"], rtol=1e-12)
        np.testing.assert_allclose(line.get_ydata(), table[col], rtol=1e-12)
    assert [ax.get_ylabel() for ax, _ in curves] == [
        "circulation Γ [m²/s]", "section lift coefficient c_l [-]", "thrust per unit radius dT/dr [N/m]"]


@pytest.mark.parametrize("name, body", [("mixed", "propeller"), ("hover", "lift")])
def test_radial_loading_is_the_mean_over_the_last_revolution(runs, name, body):
    """Summed over the strips and blades, the averaged thrust and torque per unit radius give
    the summary's thrust and torque, which are means over the last revolution's steps."""
    folder, run = runs[name]
    table = pd.read_csv(folder.path / "radial_loading.csv")
    figures_ = folder.summary["bodies"][body]
    spec = run.case.body(body)
    g = spec.geometry()
    r, dr = g.strip_radii()
    dr = dr[np.argsort(r)]
    np.testing.assert_allclose(table["r_m"], np.sort(r), rtol=1e-9)     # CSV: 10 significant digits
    assert set(table["steps_averaged"]) == {figures_["averaged_steps"]}
    assert set(table["blades_averaged"]) == {spec.blades}
    thrust = spec.blades * float(np.sum(table["dT_dr_N_per_m"] * dr))
    torque = spec.blades * float(np.sum(table["dQ_dr_N"] * dr))
    assert thrust == pytest.approx(figures_["thrust_N"], rel=1e-8)
    assert torque == pytest.approx(figures_["torque_Nm"], rel=1e-8)
    last_step = run.loads[run.loads["body"] == body]["thrust_N"].iloc[-1]
    assert abs(last_step - thrust) > 1e-6 * abs(thrust)     # a mean, not the last step
    np.testing.assert_allclose(table["inflow_angle_deg"], table["pitch_deg"] - table["alpha_deg"],
                               rtol=1e-8, atol=1e-8)


@pytest.mark.parametrize("name, body", [("mixed", "propeller"), ("hover", "lift")])
def test_disc_map_figure_is_blade_1_of_disc_map_csv(runs, name, body):
    """Each panel's cells hold blade 1's rows of disc_map.csv, one cell per sampled azimuth and
    section: around each sampled azimuth (equally spaced, so at the middle) and between the
    sections' radii."""
    folder, _ = runs[name]
    table = pd.read_csv(folder.path / "disc_map.csv")
    fig = figures(folder)[f"disc_map_{body}.png"]
    mine = table[(table["body"] == body) & (table["blade"] == 1)].sort_values(["azimuth_deg", "r_over_R"])
    n = mine["r_over_R"].nunique()
    meshes = [c for ax in fig.axes if ax.name == "polar" for c in ax.collections]
    assert len(meshes) == 2
    for mesh, col in zip(meshes, ("normal_force_N_per_m", "inflow_ratio")):
        drawn = np.asarray(mesh.get_array()).reshape(n, -1)               # (radius, azimuth)
        np.testing.assert_allclose(drawn, mine[col].to_numpy().reshape(-1, n).T, rtol=1e-12)
        corners = mesh.get_coordinates()                                  # (n + 1, m + 1, 2): theta, r
        theta = 0.5 * (corners[0, 1:, 0] + corners[0, :-1, 0])
        off = (np.degrees(theta) - mine["azimuth_deg"].to_numpy()[::n] + 180.0) % 360.0 - 180.0
        np.testing.assert_allclose(off, 0.0, atol=1e-9)
        r = mine["r_over_R"].to_numpy()[:n]                               # radial cells: half way between
        edges = corners[:, 0, 1]
        np.testing.assert_allclose(edges[1:-1], 0.5 * (r[1:] + r[:-1]), rtol=1e-12)
        assert np.all((edges[:-1] < r) & (r < edges[1:]))
    labels = [ax.get_ylabel() for ax in fig.axes if ax.name != "polar"]
    assert labels == ["normal force per unit radius dT/dr [N/m]",
                      "inflow ratio λ [-] (flow through the disc / ΩR)"]
    assert any(body in t.get_text() for t in fig.texts)           # the suptitle (matplotlib 3.7 has no getter)


@pytest.mark.parametrize("name, body", [("mixed", "propeller"), ("hover", "lift")])
def test_disc_map_holds_the_last_revolution_of_every_blade(runs, name, body):
    """disc_map.csv holds the samples radial_loading.csv averages: their means over the azimuths
    and blades agree, and blade 1 passes every sampled azimuth once."""
    folder, run = runs[name]
    table = pd.read_csv(folder.path / "disc_map.csv")
    mine = table[table["body"] == body]
    radial = pd.read_csv(folder.path / "radial_loading.csv")
    radial = radial[radial["body"] == body]
    means = mine.groupby("r_m", sort=True)[["normal_force_N_per_m", "alpha_deg"]].mean()
    np.testing.assert_allclose(means["normal_force_N_per_m"], radial["dT_dr_N_per_m"], rtol=1e-8)
    np.testing.assert_allclose(means["alpha_deg"], radial["alpha_deg"], rtol=1e-8, atol=1e-9)
    steps = folder.summary["bodies"][body]["averaged_steps"]
    blade1 = mine[mine["blade"] == 1]
    assert blade1["azimuth_deg"].nunique() == steps == len(blade1) // blade1["r_m"].nunique()
    assert set(mine["blade"]) == set(range(1, run.case.body(body).blades + 1))


def test_pitch_at_three_quarter_radius_in_the_summary(runs):
    folder, _ = runs["mixed"]
    s = json.loads((folder.path / "summary.json").read_text())["bodies"]["propeller"]
    # linear twist 22 deg at the root cut-out (0.04 m) to -4 deg at the tip (0.25 m), plus 16 deg
    eta = (0.75 * 0.25 - 0.04) / (0.25 - 0.04)
    assert s["pitch_075R_deg"] == pytest.approx(16.0 + 22.0 + (-4.0 - 22.0) * eta, rel=1e-12)
    assert s["pitch_075R_deg"] == pytest.approx(19.7, abs=0.05)    # as cases/propeller-wing.toml says
    assert s["collective_deg"] == 16.0


def test_tip_vortex_figure_is_tip_vortex_csv(runs):
    folder, _ = runs["hover"]
    table = pd.read_csv(folder.path / "tip_vortex.csv")
    fig = figures(folder)["tip_vortex.png"]
    (a1, l1), (a2, l2) = _curves(fig)
    assert l1.get_label() == l2.get_label() == "lift"
    for line in (l1, l2):
        np.testing.assert_allclose(line.get_xdata(), table["wake_age_deg"], rtol=1e-12)
    np.testing.assert_allclose(l1.get_ydata(), table["r_over_R"], rtol=1e-12)
    np.testing.assert_allclose(l2.get_ydata(), table["axial_over_R"], rtol=1e-12)
    band = a1.collections[0].get_paths()[0].vertices         # the shaded spread: mean -/+ std
    assert band[:, 1].max() == pytest.approx((table["r_over_R"] + table["r_over_R_std"]).max(), rel=1e-12)
    assert band[:, 1].min() == pytest.approx((table["r_over_R"] - table["r_over_R_std"]).min(), rel=1e-12)
    assert a2.get_xlabel() == "wake age [deg]"


def test_wake_figure_is_the_wake_tables(runs):
    folder, _ = runs["hover"]
    seg = pd.read_csv(folder.path / "wake_segments.csv")
    fig = figures(folder)["wake_3d.png"]
    lines = fig.axes[0].collections[0]
    np.testing.assert_allclose(np.asarray(lines.get_array()), np.abs(seg["gamma_m2_s"]), rtol=1e-12)


def test_plot_run_writes_one_file_per_figure(runs, tmp_path):
    folder, _ = runs["mixed"]
    paths = plot_run(folder.path, out=tmp_path / "figs")
    assert [p.name for p in paths] == ["loads.png", "span_loading.png", "radial_loading.png",
                                       "wake_3d.png", "tip_vortex.png", "disc_map_propeller.png"]
    assert all(p.stat().st_size > 10000 for p in paths)


def test_sweep_figure_has_words_and_units_and_draws_its_table():
    table = pd.DataFrame({"bodies.lift.collective": [8.0, 4.0, 6.0, 10.0],
                          "status": ["ran", "ran", "reused", "failed"],
                          "CT": [0.006, 0.003, 0.0045, np.nan], "CQ": [4e-4, 2e-4, 3e-4, np.nan],
                          "CP": [4e-4, 2e-4, 3e-4, np.nan], "FM": [0.6, 0.5, 0.55, np.nan]})
    fig = sweep_figure(table, "bodies.lift.collective", {"bodies": {"lift": {"type": "rotor"}}})
    curves = _curves(fig)
    assert [ax.get_ylabel() for ax, _ in curves] == [
        "thrust coefficient C_T [-]", "power coefficient C_P [-]", "figure of merit FM [-]"]
    assert fig.axes[-1].get_xlabel() == "lift: collective [deg]"
    for (_, line), col in zip(curves, ("CT", "CP", "FM")):
        np.testing.assert_allclose(line.get_xdata(), [4.0, 6.0, 8.0])        # failed point left out
        np.testing.assert_allclose(line.get_ydata(), table.iloc[[1, 2, 0]][col])


def test_sweep_figure_names_the_body_of_a_prefixed_coefficient():
    table = pd.DataFrame({"freestream.speed": [10.0, 20.0], "status": ["ran", "ran"],
                          "wing.CL": [0.5, 0.4], "propeller.CT": [0.1, 0.05]})
    fig = sweep_figure(table, "freestream.speed")
    assert [ax.get_ylabel() for ax in fig.axes] == ["propeller: thrust coefficient C_T [-]",
                                                   "wing: lift coefficient C_L [-]"]
    assert fig.axes[-1].get_xlabel() == "freestream: speed [m/s]"


@pytest.mark.parametrize("key, label", [
    ("freestream.angle_of_attack", "freestream: angle of attack [deg]"),
    ("bodies.lift.rpm", "lift: rpm [rev/min]"),
    ("bodies.w.span", "w: span [m]"),
    ("bodies.lift.airfoil.lift_slope", "lift airfoil: lift slope [1/rad]"),
    ("time.steps", "time: steps [-]"),
    ("no.such_key", "no such key"),
])
def test_key_label_takes_words_and_unit_from_the_schema(key, label):
    assert key_label(key) == label


def _row(table, quantity, column):
    """The three levels' ``column`` of ``quantity`` as floats (old pandas gives objects)."""
    return table.loc[quantity, [f"{column}_{k}" for k in (1, 2, 3)]].to_numpy(dtype=float)


def test_uncertainty_figure_draws_uncertainty_csv(tmp_path):
    """A table of the shape wakes.refinement writes (synthetic values, ours): C_T converges at
    second order, FM oscillates. The drawn levels, extrapolation and band equal the CSV read back."""
    h = [1.0, 1.5, 2.25]
    summaries = [{"bodies": {"lift": {"CT": 0.0046 + 1e-4 * hk ** 2, "FM": 0.6 + 0.01 * (-1) ** k}}}
                 for k, hk in enumerate(h)]
    est = estimate_loads(summaries, h)
    values = {"lift": {k: [s["bodies"]["lift"][k] for s in summaries] for k in ("CT", "FM")}}
    uncertainty_table(est, values, h).to_csv(tmp_path / "uncertainty.csv", index=False, float_format="%.10g")
    table = pd.read_csv(tmp_path / "uncertainty.csv").set_index("quantity")
    fig = uncertainty_figure(table.reset_index())
    ct, fm = fig.axes
    assert ct.get_ylabel() == "lift: " + QUANTITY_LABELS["CT"]
    assert fm.get_ylabel() == "lift: " + QUANTITY_LABELS["FM"]
    lines = {line.get_label(): line for line in ct.get_lines()}
    np.testing.assert_allclose(lines["levels"].get_xdata(), _row(table, "CT", "spacing"))
    np.testing.assert_allclose(lines["levels"].get_ydata(), _row(table, "CT", "level"))
    np.testing.assert_allclose(lines["extrapolated"].get_ydata(), [table.loc["CT", "extrapolated"]])
    assert lines["extrapolated"].get_ydata()[0] == pytest.approx(0.0046, rel=1e-9)
    u, v = table.loc["CT", "uncertainty"], table.loc["CT", "value"]
    np.testing.assert_allclose(lines["band"].get_ydata(), [v - u, v + u])
    assert [line.get_label() for line in fm.get_lines()] == ["levels"]   # no band, no extrapolation
    np.testing.assert_allclose(fm.get_lines()[0].get_ydata(), _row(table, "FM", "level"))
