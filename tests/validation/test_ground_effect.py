"""A wing near the ground (images, ``[ground]``) against Wieselsberger's image theory.

Wieselsberger (1922, NACA TM 77; memory) treats the wing and its mirror image as a biplane of
gap 2h with an elliptic loading held fixed; his fit of the induced-drag ratio is
1 - (1 - 1.32 h/b)/(1.05 + 7.4 h/b) for 0.033 <= h/b <= 0.25 (``exact.wieselsberger_drag_ratio``),
and ``exact.ground_drag_ratio`` evaluates the theory itself by quadrature at any height. The
full set is ``wakes verify --full``.
"""

from pathlib import Path

import pytest
from wakes import exact
from wakes.case import load_case, parse_case
from wakes.verify import CONVERGED, GROUND_TOLERANCE, hover_rotor, steady_wing

ASPECT_RATIO = 8.0


@pytest.mark.parametrize("hb", [0.033, 0.05, 0.1, 0.15, 0.2, 0.25])
def test_quadrature_of_the_image_theory_agrees_with_wieselsbergers_fit(hb):
    """The fit against the theory it fits, over the fit's range: within 0.5 % (measured 0.37 %
    at most, at h/b = 0.05)."""
    assert exact.ground_drag_ratio(hb) == pytest.approx(exact.wieselsberger_drag_ratio(hb), rel=0.005)


def test_image_theory_far_from_the_ground_decays_as_its_asymptote():
    """Far from the ground the image's trailing pair acts as a uniform upwash: sigma -> 1/(32
    (h/b)²) (derived from the double integral with c/(c² + δ²) -> c/δ²)."""
    for hb in (5.0, 10.0):
        sigma = 1.0 - exact.ground_drag_ratio(hb)
        assert sigma * 32.0 * hb ** 2 == pytest.approx(1.0, rel=0.01)


def test_outside_its_range_the_fit_is_refused():
    with pytest.raises(ValueError, match="within the fit's range"):
        exact.wieselsberger_drag_ratio(0.5)


@pytest.fixture(scope="module")
def free_air():
    return {m: steady_wing(ASPECT_RATIO, elliptic=True, model=m, incidence=4.0)
            for m in ("lifting-line", "vortex-lattice")}


def _factor(summary):
    return summary["CDi"] / summary["CL"] ** 2


@pytest.mark.parametrize("model, hb", [("lifting-line", 0.05), ("lifting-line", 0.1),
                                       ("lifting-line", 0.25), ("lifting-line", 1.0),
                                       ("vortex-lattice", 0.1)])
def test_induced_drag_near_the_ground_follows_wieselsberger(free_air, model, hb):
    """Elliptic wing, A = 8, 4 deg: (C_Di/C_L²) near the ground over free air against the image
    theory (and its fit where the fit holds), within 5 % (ours: no accuracy is stated with the
    theory that we can cite; it holds the elliptic loading fixed while the wing's loading
    changes near the ground). Measured: lifting line +3.0 % at h/b = 0.05, +1.3 % at 0.1, +0.6 %
    at 0.25, 0.01 % at 1; lattice -0.3 % at 0.1. The lift rises near the ground (image theory:
    the image's trailing vortices wash the wing up)."""
    near = steady_wing(ASPECT_RATIO, elliptic=True, model=model, incidence=4.0, height=hb * ASPECT_RATIO)
    ratio = _factor(near) / _factor(free_air[model])
    assert ratio == pytest.approx(exact.ground_drag_ratio(hb), rel=GROUND_TOLERANCE)
    low, high = exact.WIESELSBERGER_RANGE
    if low <= hb <= high:
        assert ratio == pytest.approx(exact.wieselsberger_drag_ratio(hb), rel=GROUND_TOLERANCE)
    assert near["CL"] > free_air[model]["CL"]


def test_drag_ratio_near_the_ground_is_converged_in_strips():
    """Lifting line at the lowest height, h/b = 0.05: 64 strips against 32 move the drag ratio by
    less than 0.5 % (ours; measured 0.004 %). The lattice's row (16 x 64 against 8 x 32 panels,
    0.38 %) is in the full table."""
    ratio = []
    for strips in (32, 64):
        free, near = (steady_wing(ASPECT_RATIO, elliptic=True, model="lifting-line", incidence=4.0,
                                  panels=(1, strips), height=h) for h in (None, 0.05 * ASPECT_RATIO))
        ratio.append(_factor(near) / _factor(free))
    assert ratio[1] == pytest.approx(ratio[0], rel=CONVERGED)


def test_the_full_tables_rotor_is_the_bundled_hover_case_coarsened():
    """``wakes verify --full`` checks the rotor near the ground (Cheeseman & Bennett 1955) on
    ``verify.hover_rotor``, built in code so an installed package can run it; it must stay the
    bundled validation rotor with the coarsening of tests/validation/test_rotors.py."""
    over = {"bodies": {"rotor": {"panels": 10, "azimuth_step": 15.0, "revolutions": 10.0,
                                 "wake_revolutions": 4.0, "wake_fade_revolutions": 0.0}},
            "output": {"wake": False}, "ground": {"point": [0.0, 0.0, -1.143]}}
    bundled = load_case(Path(__file__).resolve().parents[2] / "cases" / "validation" / "hover-8deg.toml",
                        overrides=over)
    built = parse_case(hover_rotor(1.0))
    for part in ("bodies", "wake", "fluid", "freestream", "time", "ground", "solver"):
        assert getattr(built, part) == getattr(bundled, part), part
