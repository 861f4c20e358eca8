"""A refinement study of the elliptic wing's lifting line, through wakes.uncertainty.

Prandtl's lifting line (Prandtl 1918; closed forms in wakes.exact) gives, for
the shipped elliptic wing (AR 8, 5 deg, thin-airfoil sections), C_L = 0.43865
and C_Di = C_L^2/(pi AR) = 0.0076559.

Refinement: 8, 12 and 18 spanwise strips (ratio 1.5 between levels), the time
step scaled with the strip width (the first wake row keeps its shape) and the
wake length held at 100 m (12.5 spans), frozen wake. Expected order 2: with
cosine spacing and section points at the angle midpoints the discrete
downwash of an elliptic load is uniform and C_L and the induced drag converge
as 1/n^2 (DEVELOPERS.md, "Section points at the angle midpoints").

Measured (this test's runs, printed with -s): observed orders 2.00 (C_L),
1.99 (C_Di near field), 2.07 (C_Di Trefftz); the extrapolated C_L is
0.43831, 0.077 % below Prandtl's value, and its GCI band, 0.43788 ± 0.00054,
stops at 0.43842, short of it. The gap is not a discretization error of the
study's levels: 12, 18 and 27 strips with the wake 25 spans long and the
shipped case's time step extrapolate to 0.43834, and the span efficiency
from the near-field drag, C_L^2/(pi AR C_Di), converges to 0.99946, not 1. It is a difference between this lifting
line (trailing legs from the quarter chord along the chord, then the wake)
and Prandtl's model, so the band of a strip study does not contain Prandtl's
closed form here; the extrapolated values are checked against it within
0.1 % (C_L) and 0.2 % (C_Di) instead.
"""

from pathlib import Path

import numpy as np
import pytest
from wakes import exact
from wakes.case import load_case
from wakes.run import run_case
from wakes.uncertainty import MONOTONIC, refinement_estimate

CASE = Path(__file__).resolve().parents[2] / "cases" / "validation" / "elliptic-wing.toml"
STRIPS = (8, 12, 18)
EXPECTED_ORDER = 2.0
CL_EXACT = exact.elliptic_wing_lift_slope(8.0) * np.radians(5.0)
CDI_EXACT = exact.elliptic_wing_induced_drag(CL_EXACT, 8.0)


@pytest.fixture(scope="module")
def study():
    """C_L, C_Di and Trefftz C_Di at each level, finest last."""
    base_dt, base_steps, base_strips = 0.025, 400, 12     # 100 m of wake at 10 m/s
    rows = []
    for n in STRIPS:
        run = run_case(load_case(CASE, {
            "wake": {"motion": "frozen"},
            "time": {"dt": base_dt * base_strips / n, "steps": base_steps * n // base_strips},
            "bodies": {"wing": {"spanwise_panels": n}}}))
        s = run.summary["bodies"]["wing"]
        rows.append((s["CL"], s["CDi"], s["CDi_trefftz"]))
    values = dict(zip(("CL", "CDi", "CDi_trefftz"), np.array(rows).T))
    spacing = 1.0 / np.array(STRIPS)
    return {k: refinement_estimate(v, spacing, expected_order=EXPECTED_ORDER, order_tolerance=0.15)
            for k, v in values.items()}


@pytest.mark.parametrize("load", ["CL", "CDi", "CDi_trefftz"])
def test_lifting_line_converges_at_second_order_with_strips(study, load):
    est = study[load]
    print(f"{load}: {est.value:.6g} ± {est.uncertainty:.2g}, order {est.order:.3f}, "
          f"extrapolated {est.extrapolated:.6g}")
    assert est.convergence == MONOTONIC and est.trusted
    assert abs(est.order - EXPECTED_ORDER) <= 0.3


def test_extrapolated_lift_and_drag_near_prandtl(study):
    """Within 0.1 % (C_L) and 0.2 % (C_Di, which goes as C_L^2) of Prandtl's closed form:
    the model difference measured in the module docstring (0.077 % in C_L) and no more."""
    assert study["CL"].extrapolated == pytest.approx(CL_EXACT, rel=1e-3)
    assert study["CDi"].extrapolated == pytest.approx(CDI_EXACT, rel=2e-3)
    assert study["CDi_trefftz"].extrapolated == pytest.approx(CDI_EXACT, rel=2e-3)
