"""Airfoil polars: thin-airfoil law, tables, range handling, inverse lift curve."""

import numpy as np
import pytest
from wakes.aero.polars import PolarRangeError, SectionPolars, TablePolar, ThinAirfoilPolar, load_polar_table
from wakes.errors import CaseError, InputError


def test_thin_airfoil_lift_is_two_pi_alpha():
    """cl = 2 pi (alpha - alpha_0) (Glauert 1926, thin-airfoil theory), cd = cd0 + cd2 cl^2."""
    p = ThinAirfoilPolar(zero_lift_angle=np.radians(-2.0), cd0=0.01, cd2=0.02)
    a = np.radians([-4.0, 0.0, 5.0])
    cl, cd, dcl = p.evaluate(a)
    np.testing.assert_allclose(cl, 2 * np.pi * (a + np.radians(2.0)), rtol=1e-14)
    np.testing.assert_allclose(cd, 0.01 + 0.02 * cl ** 2, rtol=1e-14)
    np.testing.assert_allclose(dcl, 2 * np.pi)
    np.testing.assert_allclose(p.alpha_for_cl(cl), a, atol=1e-15)


def _table():
    alpha = np.radians([-4.0, 0.0, 4.0, 8.0, 12.0])
    return TablePolar(alpha, [-0.3, 0.1, 0.5, 0.8, 0.7], [0.02, 0.01, 0.012, 0.02, 0.05], name="t.csv")


def test_table_interpolates_linearly_with_segment_slope():
    p = _table()
    cl, cd, dcl = p.evaluate(np.radians([2.0, 4.0, 10.0]))
    np.testing.assert_allclose(cl, [0.3, 0.5, 0.75])
    np.testing.assert_allclose(cd, [0.011, 0.012, 0.035])
    np.testing.assert_allclose(dcl[0], 0.4 / np.radians(4.0))


def test_table_outside_range_is_an_error_naming_polar_and_angle():
    with pytest.raises(PolarRangeError, match=r"'t.csv' covers -4 to 12 deg.*13") as info:
        _table().evaluate(np.radians([0.0, 13.0]))
    assert info.value.index == 1
    assert isinstance(info.value, InputError)


def test_flat_plate_extension_is_continuous_and_reaches_flat_plate():
    """Beyond the table: blend to cl = sin 2a, cd = 2 sin^2 a (normal force 2 sin a; common practice)."""
    alpha = np.radians([-4.0, 0.0, 4.0, 8.0, 12.0])
    p = TablePolar(alpha, [-0.3, 0.1, 0.5, 0.8, 0.7], [0.02, 0.01, 0.012, 0.02, 0.05],
                   out_of_range="flat-plate")
    edge = np.radians(12.0)
    cl, cd, _ = p.evaluate(np.array([edge, edge + 1e-9]))
    assert abs(cl[1] - cl[0]) < 1e-6 and abs(cd[1] - cd[0]) < 1e-6
    far = np.radians([40.0, -60.0])
    cl, cd, dcl = p.evaluate(far)
    np.testing.assert_allclose(cl, np.sin(2 * far))
    np.testing.assert_allclose(cd, 2 * np.sin(far) ** 2)
    # slope inside the blend agrees with a finite difference
    a = np.radians(15.0)
    h = 1e-7
    fd = (p.evaluate(np.array([a + h]))[0] - p.evaluate(np.array([a - h]))[0]) / (2 * h)
    np.testing.assert_allclose(p.evaluate(np.array([a]))[2], fd, rtol=1e-5)


def test_alpha_for_cl_inverts_rising_part():
    p = _table()
    np.testing.assert_allclose(p.alpha_for_cl(np.array([0.3, 0.65])), np.radians([2.0, 6.0]))


def test_non_increasing_angles_rejected():
    with pytest.raises(InputError, match="increase strictly; row 3"):
        TablePolar(np.radians([0.0, 2.0, 2.0]), [0, 1, 2], [0, 0, 0], name="x")


def test_csv_file_errors_name_file_and_columns(tmp_path):
    f = tmp_path / "p.csv"
    f.write_text("alpha_deg,cl\n0,0.1\n1,0.2\n")
    with pytest.raises(CaseError, match=r"p.csv.*missing column\(s\) cd"):
        load_polar_table(f)
    f.write_text("alpha_deg,cl,cd\n0,0.1,0.01\n0,0.2,0.01\n")
    with pytest.raises(CaseError, match=r"p.csv.*increase strictly"):
        load_polar_table(f)
    f.write_text("alpha_deg,cl,cd\n0,0.1,0.01\n1,abc,0.01\n")
    with pytest.raises(CaseError, match=r"column cl must hold finite numbers; data row 2"):
        load_polar_table(f)
    with pytest.raises(CaseError, match="not found"):
        load_polar_table(tmp_path / "missing.csv")


def test_csv_round_trip(tmp_path):
    f = tmp_path / "p.csv"
    f.write_text("# comment\nalpha_deg, cl, cd\n-2,-0.1,0.01\n3,0.4,0.012\n")
    p = load_polar_table(f)
    np.testing.assert_allclose(p.evaluate(np.radians([0.0]))[0], [0.1])


def test_section_polars_map_errors_to_section_index():
    thin = ThinAirfoilPolar()
    sp = SectionPolars((thin, _table()), [0, 1, 1, 0])
    cl, _, _ = sp.evaluate(np.radians([1.0, 2.0, 4.0, 3.0]))
    np.testing.assert_allclose(cl[[1, 2]], [0.3, 0.5])
    np.testing.assert_allclose(cl[[0, 3]], 2 * np.pi * np.radians([1.0, 3.0]))
    with pytest.raises(PolarRangeError) as info:
        sp.evaluate(np.radians([1.0, 2.0, 30.0, 3.0]))
    assert info.value.index == 2
