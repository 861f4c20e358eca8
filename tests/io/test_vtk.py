"""Wake snapshots read back by an independent reader (the ``vtk`` package)."""

import numpy as np
import pytest
import wakes
from wakes.io import vtk as vtkio

vtk = pytest.importorskip("vtk")
from vtk.util.numpy_support import vtk_to_numpy  # noqa: E402


def read_vtp(path):
    reader = vtk.vtkXMLPolyDataReader()
    reader.SetFileName(str(path))
    reader.Update()
    return reader.GetOutput()


def test_particles_round_trip(tmp_path):
    rng = np.random.default_rng(0)
    p = wakes.Particles(rng.normal(size=(37, 3)), rng.normal(size=(37, 3)),
                        rng.uniform(0.1, 0.2, 37))
    data = read_vtp(vtkio.write_particles(tmp_path / "p.vtp", p))
    assert data.GetNumberOfPoints() == 37 and data.GetNumberOfVerts() == 37
    assert np.array_equal(vtk_to_numpy(data.GetPoints().GetData()), p.positions)
    pd = data.GetPointData()
    assert np.array_equal(vtk_to_numpy(pd.GetArray("strength")), p.strengths)
    assert np.array_equal(vtk_to_numpy(pd.GetArray("radius")), p.radii)
    assert pd.GetArray("strength_magnitude") is not None


def test_filaments_round_trip(tmp_path):
    f = wakes.Filaments.from_polyline(np.eye(3), [1.0, 2.0, 3.0], [0.1, 0.2, 0.3], closed=True)
    data = read_vtp(vtkio.write_filaments(tmp_path / "f.vtp", f))
    assert data.GetNumberOfPoints() == 3 and data.GetNumberOfLines() == 3
    cd = data.GetCellData()
    assert np.array_equal(vtk_to_numpy(cd.GetArray("circulation")), [1.0, 2.0, 3.0])
    assert np.array_equal(vtk_to_numpy(cd.GetArray("core_radius")), [0.1, 0.2, 0.3])
    conn = vtk_to_numpy(data.GetLines().GetConnectivityArray())
    assert np.array_equal(conn, f.segments.reshape(-1))


def test_collection_lists_snapshots_relative_to_itself(tmp_path):
    f = wakes.Filaments.from_polyline(np.eye(3), 1.0, 0.1)
    files = [vtkio.write_filaments(tmp_path / "wake" / f"f_{k}.vtp", f) for k in range(3)]
    pvd = vtkio.write_collection(tmp_path / "wake.pvd", zip([0.0, 0.5, 1.0], files))
    reader = vtk.vtkXMLGenericDataObjectReader()  # pvd is plain XML; parse it and open each
    import xml.etree.ElementTree as ET
    sets = ET.parse(pvd).getroot().findall("./Collection/DataSet")
    assert [float(s.get("timestep")) for s in sets] == [0.0, 0.5, 1.0]
    for s in sets:
        reader.SetFileName(str(tmp_path / s.get("file")))
        reader.Update()
        assert reader.GetOutput().GetNumberOfLines() == 2


def test_empty_wake_writes_a_valid_file(tmp_path):
    p = wakes.Particles(np.zeros((0, 3)), np.zeros((0, 3)), 0.1)
    assert read_vtp(vtkio.write_particles(tmp_path / "e.vtp", p)).GetNumberOfPoints() == 0
