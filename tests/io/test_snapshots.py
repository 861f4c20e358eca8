"""Wake snapshots written as a run goes: collections stay consistent through kills and resumes."""

import xml.etree.ElementTree as ET

import numpy as np
import pytest
import wakes
from wakes.io.snapshots import WakeSnapshots

vtk = pytest.importorskip("vtk")


def _ring(n):
    t = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return wakes.Filaments.from_polyline(np.stack([np.cos(t), np.sin(t), 0 * t], 1), 1.0, 0.05,
                                         closed=True)


def _listed(folder):
    root = ET.parse(folder / "filaments.pvd").getroot()
    return [(float(d.get("timestep")), d.get("file")) for d in root.iter("DataSet")]


def test_snapshots_accumulate_and_a_resume_keeps_only_earlier_ones(tmp_path):
    snaps = WakeSnapshots(tmp_path)
    for step in range(4):
        snaps.write(step, 0.1 * step, [_ring(3 + step)])
    folder = tmp_path / "wake"
    assert [f for _, f in _listed(folder)] == [f"filaments_{k:06d}.vtp" for k in range(4)]
    reader = vtk.vtkXMLPolyDataReader()
    for k, (_, f) in enumerate(_listed(folder)):   # every listed file is complete and readable
        reader.SetFileName(str(folder / f))
        reader.Update()
        assert reader.GetOutput().GetNumberOfLines() == 3 + k

    (folder / "filaments_000009.vtp").write_text("left by a killed run, never listed")
    resumed = WakeSnapshots(tmp_path, keep_before=2)   # resume from a checkpoint at step 2
    assert resumed.times("filaments") == [0.0, 0.1]
    assert sorted(p.name for p in folder.iterdir()) == ["filaments.pvd", "filaments_000000.vtp",
                                                        "filaments_000001.vtp"]
    resumed.write(2, 0.15, [_ring(8)])        # a smaller step after the resume: new times
    assert _listed(folder) == [(0.0, "filaments_000000.vtp"), (0.1, "filaments_000001.vtp"),
                               (0.15, "filaments_000002.vtp")]

    WakeSnapshots(tmp_path)                   # a new run in the folder (--overwrite) starts clean
    assert list(folder.iterdir()) == []


def test_a_resume_that_rewrites_a_stale_step_keeps_the_new_file(tmp_path):
    """A stopped run writes its final wake at the step it stopped before; the resumed run
    (stale files removed at its first write, not before) writes that step again and keeps it."""
    snaps = WakeSnapshots(tmp_path)
    for step in (2, 4):
        snaps.write(step, 0.05 * step, [_ring(5)])
    resumed = WakeSnapshots(tmp_path, keep_before=4, remove_now=False)
    resumed.write(4, 0.2, [_ring(6)])
    folder = tmp_path / "wake"
    assert [f for _, f in _listed(folder)] == ["filaments_000002.vtp", "filaments_000004.vtp"]
    assert all((folder / f).is_file() for _, f in _listed(folder))


def test_particles_get_their_own_collection_and_an_empty_wake_writes_nothing(tmp_path):
    snaps = WakeSnapshots(tmp_path)
    assert snaps.write(0, 0.0, []) == []
    p = wakes.Particles(np.zeros((4, 3)), np.ones((4, 3)), 0.1)
    names = sorted(x.name for x in snaps.write(3, 0.3, [p, _ring(5)]))
    assert names == ["filaments.pvd", "filaments_000003.vtp", "particles.pvd", "particles_000003.vtp"]


ROTOR = """
[bodies.rotor]
type = "rotor"
blades = 2
radius = 1.0
root_cutout = 0.2
chord = 0.1
rpm = 600.0
panels = 4
"""


def test_lifting_surfaces_are_written_beside_the_wake_and_turn_with_the_blades(tmp_path):
    import tomllib

    from wakes.aero.bodies import BODY_MODELS
    from wakes.case import parse_case
    case = parse_case(tomllib.loads(ROTOR))
    body = BODY_MODELS["rotor"](case.bodies[0], case)
    snaps = WakeSnapshots(tmp_path)
    quarter = 0.025                                      # a quarter revolution at 600 rpm [s]
    for step, t in ((0, 0.0), (1, quarter)):
        snaps.write(step, t, [_ring(4)], body.surfaces(t))
    assert snaps.times("surfaces") == [0.0, quarter]
    assert snaps.write(2, 0.05, [], body.surfaces(0.05)) == []   # no wake, no file (nothing before a wake)
    reader = vtk.vtkXMLPolyDataReader()
    corners = []
    for step in (0, 1):
        reader.SetFileName(str(tmp_path / "wake" / f"surfaces_{step:06d}.vtp"))
        reader.Update()
        poly = reader.GetOutput()
        assert poly.GetNumberOfPolys() == 2 * 4            # two blades of 4 strips, one chordwise panel
        blade = poly.GetCellData().GetArray("surface")
        assert sorted({int(blade.GetValue(i)) for i in range(8)}) == [0, 1]
        area = poly.GetCellData().GetArray("area")
        surfaces = body.surfaces(0.0)
        assert sum(area.GetValue(i) for i in range(8)) == pytest.approx(sum(s.areas.sum() for s in surfaces))
        corners.append(np.array([poly.GetPoint(i) for i in range(poly.GetNumberOfPoints())]))
    # a quarter turn later each corner is the first one turned 90 deg about the axis (+z, ccw)
    turned = corners[0] @ np.array([[0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    np.testing.assert_allclose(corners[1], turned, atol=1e-12)
