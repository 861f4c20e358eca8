"""Write the built-in low-speed NACA 0012 polar near a Reynolds number of 2 million.

    python tools/make_naca0012_polar.py > wakes/aero/data/naca0012.csv

Meant for the model rotor of Caradonna & Tung (1981, NASA TM-81232): chord
0.1905 m, tip speed 149.6 m/s (1250 rpm, R = 1.143 m), so Re = V c / nu =
1.95e6 at the tip with nu = 1.46e-5 m^2/s (1.4e6 at 0.7 R). The table is the
incompressible (M = 0) polar; the run applies the compressibility rule.

Every number below names where it comes from. "read" means read for this
table from the named source, "memory" means recalled, not re-read, and
"ours" means a modelling choice of this script, not data.

Lift, -16 to 16 degrees (the section is symmetric: cl(-a) = -cl(a), exact
by geometry):

* Lift-curve slope a0 = 0.1025 + 0.00485 log10(Re / 1e6) per degree at
  M = 0: McCroskey's correlation of NACA 0012 wind-tunnel data, quoted as
  beta a0 with the Prandtl-Glauert beta (McCroskey 1987, "A critical
  assessment of wind tunnel results for the NACA 0012 airfoil", NASA
  TM-100019; memory). At Re = 2e6 it is 0.1040 per degree (5.96 per
  radian). It agrees with the slopes of Abbott & von Doenhoff 1959 (*Theory
  of Wing Sections*, Appendix IV; about 0.105 per degree at Re = 3e6 to
  9e6; memory) and Ladson 1988 (NASA TM-4074, M = 0.15, Re = 2e6 to 12e6;
  0.105 to 0.11 per degree; memory) to within their spread.
* Maximum lift cl_max = 1.40 at Re = 2e6: memory of the spread of
  measurements near this Reynolds number collected by McCroskey (1987)
  and of Ladson (1988) at Re = 2e6 to 3e6 (about 1.3 to 1.5); Abbott &
  von Doenhoff give about 1.5 to 1.6 at Re = 3e6 to 9e6 for the smooth
  section (memory). The value is the middle of the remembered range.
* Stall angle 17 degrees: the drag of Sheldahl & Klimas (below) at Re =
  2e6 has not yet jumped at 16 degrees, while their tables at 1e6 and
  0.7e6 jump at 16 and 15 degrees (read); Abbott & von Doenhoff's lift
  peaks at about 16 degrees at Re = 3e6 (memory).
* Shape between the straight part and the peak (ours): the line a0 a up
  to a1, then the parabola tangent to it at a1 whose vertex is (17 deg,
  cl_max); a1 = 2 cl_max / a0 - 17 deg = 9.9 deg. The table stops at 16
  degrees, the last angle with read drag; beyond it the run extends the
  polar (out_of_range = "viterna" continues it to +-180 degrees by
  Viterna & Corrigan 1982).

Drag, 0 to 16 degrees: Sheldahl & Klimas 1981 ("Aerodynamic
characteristics of seven symmetrical airfoil sections through 180-degree
angle of attack ...", Sandia SAND80-2114), NACA 0012, Re = 2e6 column,
read from a secondary copy of the report's tables (whose copier states
that obvious anomalies of the original were corrected; the values below
were not compared with the report itself). Drag is even in the angle
for the symmetric section.
"""

import numpy as np

RE = 2.0e6                          # Reynolds number the table stands for (C&T tip: 1.95e6)
SLOPE_PER_DEG = 0.1025 + 0.00485 * np.log10(RE / 1e6)   # McCroskey 1987 (memory), M = 0
CL_MAX = 1.40                       # memory, Re ~ 2e6 (see the module notes)
STALL_DEG = 17.0                    # read (drag rise, Sheldahl & Klimas) and memory (Abbott & von Doenhoff)

# Sheldahl & Klimas 1981, NACA 0012, Re = 2e6 (read from a copy of its tables): alpha_deg -> cd
CD_SK81_RE2E6 = {
    0: 0.0064, 1: 0.0064, 2: 0.0066, 3: 0.0069, 4: 0.0073, 5: 0.0081, 6: 0.0090, 7: 0.0097, 8: 0.0105,
    9: 0.0113, 10: 0.0128, 11: 0.0140, 12: 0.0155, 13: 0.0172, 14: 0.0191, 15: 0.0213, 16: 0.0237,
}


def lift(alpha_deg: np.ndarray) -> np.ndarray:
    """cl of the model above (odd in the angle)."""
    a = np.abs(alpha_deg)
    a1 = 2.0 * CL_MAX / SLOPE_PER_DEG - STALL_DEG
    straight = SLOPE_PER_DEG * a
    rounded = CL_MAX - 0.5 * SLOPE_PER_DEG / (STALL_DEG - a1) * (a - STALL_DEG) ** 2
    return np.sign(alpha_deg) * np.where(a <= a1, straight, rounded)


def main() -> None:
    alpha = np.arange(-16.0, 16.0 + 1e-9, 1.0)
    cl = lift(alpha)
    cd = np.array([CD_SK81_RE2E6[int(abs(a))] for a in alpha])
    a1 = 2.0 * CL_MAX / SLOPE_PER_DEG - STALL_DEG
    print("# NACA 0012, incompressible (M = 0), Reynolds number 2e6; written by tools/make_naca0012_polar.py,")
    print("# whose docstring names every source. Summary:")
    print(f"# cl: slope {SLOPE_PER_DEG:.5f}/deg (McCroskey 1987, NASA TM-100019, correlation; memory), straight")
    print(f"#     to {a1:.2f} deg, then a parabola (ours) to cl_max {CL_MAX} at {STALL_DEG:g} deg (memory of")
    print("#     McCroskey 1987 and Ladson 1988, NASA TM-4074; stall angle from the drag rise of Sheldahl")
    print("#     & Klimas 1981); the table stops at 16 deg.")
    print("# cd: Sheldahl & Klimas 1981 (SAND80-2114), Re = 2e6, read from a copy of its tables.")
    print("# source column: cl source ; cd source")
    print("alpha_deg,cl,cd,source")
    for a, l, d in zip(alpha, cl, cd):
        src_cl = "McCroskey 1987 slope (memory)" if abs(a) <= a1 else "stall model (ours) to cl_max (memory)"
        print(f"{a:.1f},{l:.4f},{d:.4f},{src_cl}; Sheldahl & Klimas 1981 Re 2e6 (read)")


if __name__ == "__main__":
    main()
