"""Write the invented section polar used by the wind-turbine cases.

The table is made up, not measured: a thin-airfoil lift line with a reduced
slope and a negative zero-lift angle (a moderately cambered section), a
smooth stall that blends into flat-plate coefficients (cl = sin 2a,
cd = 2 sin^2 a; common practice for post-stall estimates) between 14 and 26
degrees, and a parabolic drag bucket. Every coefficient below is invented;
do not use the table for a real design.

    python tools/make_rotor_polars.py > cases/validation/polars/turbine-section.csv
"""

import numpy as np

LIFT_SLOPE = 0.95 * 2 * np.pi      # 1/rad: thin-airfoil slope times an invented viscous factor
ZERO_LIFT_DEG = -2.0               # deg, invented camber
CL_MAX = 1.3                       # invented saturation of the attached lift
CD_MIN, CL_MIN_DRAG, CD_K = 0.009, 0.4, 0.012   # invented drag bucket
BLEND_DEG = (14.0, 26.0)           # invented range over which the section stalls to a flat plate


def section(alpha_deg: np.ndarray):
    a = np.radians(alpha_deg)
    linear = LIFT_SLOPE * np.radians(alpha_deg - ZERO_LIFT_DEG)
    cl_attached = CL_MAX * np.tanh(linear / CL_MAX)
    cd_attached = CD_MIN + CD_K * (cl_attached - CL_MIN_DRAG) ** 2
    lo, hi = BLEND_DEG
    s = np.clip((np.abs(alpha_deg) - lo) / (hi - lo), 0.0, 1.0)
    w = s * s * (3.0 - 2.0 * s)                    # smooth step from attached to flat plate
    cl = (1.0 - w) * cl_attached + w * np.sin(2.0 * a)
    cd = (1.0 - w) * cd_attached + w * 2.0 * np.sin(a) ** 2
    return cl, cd


def main() -> None:
    alpha = np.arange(-30.0, 40.0 + 1e-9, 1.0)
    cl, cd = section(alpha)
    print("# Invented section polar for the wind-turbine cases (tools/make_rotor_polars.py).")
    print("# Not a measured airfoil: thin-airfoil slope x 0.95, zero lift at -2 deg, tanh")
    print("# saturation at cl 1.3, flat plate past 26 deg; for demonstration only.")
    print("alpha_deg,cl,cd")
    for a, l, d in zip(alpha, cl, cd):
        print(f"{a:.1f},{l:.4f},{d:.5f}")


if __name__ == "__main__":
    main()
