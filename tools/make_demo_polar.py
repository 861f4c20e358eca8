"""Write the invented section polar used by the survey-glider demo case.

The table is made up, not measured: a thin-airfoil lift line with a reduced
slope and a negative zero-lift angle (a moderately cambered section), a
smooth stall, and a parabolic drag polar with a drag rise past stall.
Every coefficient below is invented for the demo; do not use the table for
a real design.

    python tools/make_demo_polar.py > cases/polars/survey-glider-section.csv
"""

import numpy as np

LIFT_SLOPE = 0.92 * 2 * np.pi      # 1/rad: thin-airfoil slope times an invented viscous factor
ZERO_LIFT_DEG = -3.5               # deg, invented camber
CL_MAX = 1.35                      # invented stall lift coefficient
CD_MIN, CL_MIN_DRAG, CD_K = 0.0085, 0.45, 0.010   # invented drag bucket
STALL_DRAG = 0.9                   # invented post-stall drag growth per rad^2
STALL_ABOVE_DEG, STALL_BELOW_DEG = 10.0, -8.0   # invented onset of the drag rise


def section(alpha_deg: np.ndarray):
    a = np.radians(alpha_deg - ZERO_LIFT_DEG)
    linear = LIFT_SLOPE * a
    cl = CL_MAX * np.tanh(linear / CL_MAX)          # smooth saturation at CL_MAX (and -CL_MAX)
    excess = np.radians(np.maximum.reduce([alpha_deg - STALL_ABOVE_DEG, STALL_BELOW_DEG - alpha_deg,
                                            np.zeros_like(alpha_deg)]))
    cd = CD_MIN + CD_K * (cl - CL_MIN_DRAG) ** 2 + STALL_DRAG * excess ** 2
    return cl, cd


def main() -> None:
    alpha = np.arange(-12.0, 20.0 + 1e-9, 1.0)
    cl, cd = section(alpha)
    print("# Invented section polar for the survey-glider demo (tools/make_demo_polar.py).")
    print("# Not a measured airfoil: thin-airfoil slope x 0.92, zero lift at -3.5 deg,")
    print("# tanh stall at cl 1.35, parabolic drag bucket; for demonstration only.")
    print("alpha_deg,cl,cd")
    for a, l, d in zip(alpha, cl, cd):
        print(f"{a:.1f},{l:.4f},{d:.5f}")


if __name__ == "__main__":
    main()
