"""Metric maps over task regions (``ir.metric_map``) and their netCDF files.

What is checked, and against what:
- every map value equals the public core function evaluated at the map's own solved
  configuration ``ds.q`` (``ir.isotropy_index``, ``ir.mass_ratio``, ...);
- on a point-mass two-link arm (references.md "Case B", masses lumped at the elbow and the
  tip), the map's principal masses equal the closed form eig(Lambda) = (m2,
  m2 + m1 / sin^2 q2) (references.md item 4 [D], a consequence of Khatib 1987 eq. 18) and
  its manipulability equals l1 l2 |sin q2| (Yoshikawa 1985, references.md item 3; formula
  status as listed there);
- the payload identity: a point payload m_L at the tool adds exactly m_L I to Lambda
  (references.md item 4 [D], Woodbury identity), so every principal mass grows by exactly
  m_L, and the mass along the approach u becomes 1 / (u^T (Lambda + m_L I)^-1 u);
- grid coordinates x_m, y_m, z_m = centre + u * axis0 + v * axis1, computed here by hand;
- the netCDF round trip with xarray's own ``assert_identical``.
"""

import os
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
OK = 0


@pytest.fixture(scope="module")
def sorter():
    return ir.load_design(DESIGNS / "sorter_planar.toml")


@pytest.fixture(scope="module")
def region():
    # larger than the arm's reach (0.56 m) at its corners, so some points are not solved
    return ir.Rectangle((0.30, 0.0, 0.10), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.6, 0.5), 0.1)


@pytest.fixture(scope="module")
def task(region):
    return ir.Task(region, accel_mps2=3.0, payload_kg=None, approach=(0.0, 0.0, -1.0))


@pytest.fixture(scope="module")
def sorter_map(sorter, task):
    return ir.metric_map(sorter, task)


def _solved(ds):
    ok = ds["status"].values == OK
    return ok, ds["q"].values[ok]


# ---------------------------------------------------------------------------
# map values equal the core at the solved configurations
# ---------------------------------------------------------------------------
def test_map_has_solved_and_unsolved_points(sorter_map):
    status = sorter_map["status"].values
    assert status.shape == (6, 7)                 # 0.5/0.1 + 1 by 0.6/0.1 + 1 points
    assert np.count_nonzero(status == OK) >= 10
    assert np.count_nonzero(status != OK) >= 3


def test_map_values_equal_core(sorter, sorter_map):
    ds = sorter_map
    ok, q = _solved(ds)
    # the configuration puts the tool on the grid point
    xyz = np.stack([ds[c].values[ok] for c in ("x_m", "y_m", "z_m")], axis=-1)
    assert np.max(np.abs(sorter.tool_position(q) - xyz)) <= 1e-8
    close = dict(rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(ds["isotropy"].values[ok], ir.isotropy_index(sorter, q), **close)
    np.testing.assert_allclose(ds["mass_ratio"].values[ok], ir.mass_ratio(sorter, q), **close)
    np.testing.assert_allclose(ds["manipulability"].values[ok], ir.manipulability(sorter, q),
                               **close)
    pm = ir.principal_masses(sorter, q)
    np.testing.assert_allclose(ds["principal_mass"].values[ok], pm.masses, **close)
    # eigenvectors are defined up to sign: compare |cos| of the angle between them
    dirs = ds["principal_direction"].values[ok]
    cos = np.abs(np.sum(dirs * pm.directions, axis=-2))
    np.testing.assert_allclose(cos, 1.0, rtol=0, atol=1e-9)
    u = np.array([0.0, 0.0, -1.0])
    np.testing.assert_allclose(ds["mass_along_approach"].values[ok], ir.mass_along(sorter, q, u),
                               **close)
    head = ir.torque_headroom(sorter, q, 3.0)
    np.testing.assert_allclose(ds["min_margin"].values[ok], head.min_margin, **close)
    np.testing.assert_allclose(ds["utilisation"].values[ok], head.utilisation, **close)
    np.testing.assert_allclose(ds["static_torque"].values[ok], head.static_torque_Nm, **close)
    assert np.array_equal(ds["limiting_joint"].values[ok], head.limiting_joint)
    np.testing.assert_allclose(ds["accel_capability"].values[ok],
                               ir.acceleration_capability(sorter, q), **close)
    assert np.array_equal(ds["near_singular"].values[ok], ir.near_singular(sorter, q))


def test_map_follows_posture(sorter, region):
    # the map's q is the requested branch: elbow above/below the line joint 1 -> tool
    for posture, sign in (("elbow_up", 1.0), ("elbow_down", -1.0)):
        ds = ir.metric_map(sorter, region, posture=posture)
        ok, q = _solved(ds)
        origins, _ = sorter.link_frames(q)
        tool = sorter.tool_position(q)
        line = (tool - origins[:, 0]) / np.linalg.norm(tool - origins[:, 0], axis=-1)[:, None]
        rel = origins[:, 1] - origins[:, 0]
        height = (rel - np.sum(rel * line, -1)[:, None] * line)[:, 2]   # world z is up
        assert np.all(sign * height > -1e-12)
        assert ds.attrs["posture"] == posture


def test_spatial_box_map_equals_core():
    arm = ir.load_design(DESIGNS / "kestrel_a.toml")
    box = ir.Box((0.35, 0.05, 0.25), (0.2, 0.1, 0.2), 0.1)
    ds = ir.metric_map(arm, box, accel_mps2=1.0)
    assert ds["status"].dims == ("w_m", "v_m", "u_m")
    assert ds["status"].shape == (3, 2, 3)
    assert ds["principal_mass"].shape == (3, 2, 3, 3)
    ok, q = _solved(ds)
    assert ok.sum() >= 10
    np.testing.assert_allclose(ds["isotropy"].values[ok], ir.isotropy_index(arm, q), rtol=1e-12)
    np.testing.assert_allclose(ds["principal_mass"].values[ok], ir.principal_masses(arm, q).masses,
                               rtol=1e-12)
    np.testing.assert_allclose(ds["min_margin"].values[ok],
                               ir.torque_headroom(arm, q, 1.0).min_margin, rtol=1e-12, atol=1e-12)
    xyz = np.stack([ds[c].values[ok] for c in ("x_m", "y_m", "z_m")], axis=-1)
    assert np.max(np.abs(arm.tool_position(q) - xyz)) <= 1e-8


def test_point_mass_arm_against_closed_form():
    # references.md Case B: m1 = 2 kg at the elbow, m2 = 1 kg at the tip, l1 = 1, l2 = 0.8 m;
    # massless links (allowed), the elbow mass as joint 2's motor, the tip mass as payload.
    arm = ir.planar_chain([1.0, 0.8], [0.0, 0.0], motor_masses_kg=[0.0, 2.0], payload_kg=1.0)
    pts = ir.PointSet(((1.2, 0.0, 0.5), (0.4, 0.0, 1.1), (-0.6, 0.0, 0.9), (1.5, 0.0, -0.3)))
    ds = ir.metric_map(arm, pts)
    ok, q = _solved(ds)
    assert ok.all()
    s2 = np.sin(q[:, 1])
    expected = np.stack([np.full_like(s2, 1.0), 1.0 + 2.0 / s2**2], axis=-1)   # [D]
    np.testing.assert_allclose(ds["principal_mass"].values, expected, rtol=1e-10)
    np.testing.assert_allclose(ds["mass_ratio"].values, 1.0 / (1.0 + 2.0 / s2**2), rtol=1e-10)
    np.testing.assert_allclose(ds["manipulability"].values, 1.0 * 0.8 * np.abs(s2), rtol=1e-12)
    # the heavy direction lies along link 2, u12 = (cos(q1+q2), sin(q1+q2)) in the plane (x, z)
    q12 = q.sum(-1)
    u12 = np.stack([np.cos(q12), np.zeros_like(q12), np.sin(q12)], axis=-1)
    heavy = ds["principal_direction"].values[..., 1]
    np.testing.assert_allclose(np.abs(np.sum(heavy * u12, -1)), 1.0, atol=1e-9)


# ---------------------------------------------------------------------------
# unsolved points: kept, NaN, with a status
# ---------------------------------------------------------------------------
def test_unsolved_points_are_nan_and_kept(sorter_map):
    ds = sorter_map
    status = ds["status"].values
    # solved points are 'ok' or 'branch_seam' (solved next to a jump of the solution); both
    # carry values
    bad = ~np.isin(status, ir.SOLVED)
    assert ds["status"].size == 6 * 7                    # the grid has all points
    assert set(np.unique(status[bad])) <= set(ir.STATUS) - set(ir.SOLVED)
    for name in ("isotropy", "mass_ratio", "manipulability", "min_margin", "accel_capability",
                 "mass_along_approach"):
        assert np.all(np.isnan(ds[name].values[bad])), name
        assert np.all(np.isfinite(ds[name].values[~bad])), name
    for name in ("principal_mass", "principal_direction", "utilisation", "static_torque", "q"):
        assert np.all(np.isnan(ds[name].values[bad])), name
    assert np.all(ds["limiting_joint"].values[bad] == -1)
    assert not np.any(ds["near_singular"].values[bad])
    # a solved point has finite joint angles
    assert np.all(np.isfinite(ds["q"].values[~bad]))


def test_unsolved_reasons_match_geometry(sorter, sorter_map):
    ds = sorter_map
    # distance from joint 1 (at the world origin) beyond l1 + l2 = 0.56 m: out of reach (1)
    r = np.hypot(ds["x_m"].values, ds["z_m"].values)
    far = r > 0.56 + 1e-9
    assert far.sum() >= 3
    assert np.all(ds["status"].values[far] == 1)


def test_status_flags(sorter_map):
    attrs = sorter_map["status"].attrs
    assert list(attrs["flag_values"]) == list(ir.STATUS)
    assert attrs["flag_meanings"].split() == list(ir.STATUS.values())


# ---------------------------------------------------------------------------
# coordinates and attributes
# ---------------------------------------------------------------------------
def test_rectangle_coords(sorter_map, region):
    ds = sorter_map
    u = ds["u_m"].values[None, :]
    v = ds["v_m"].values[:, None]
    np.testing.assert_allclose(u[0], 0.1 * np.arange(-3, 4), atol=1e-15)
    np.testing.assert_allclose(v[:, 0], 0.1 * np.arange(-2.5, 3.0), atol=1e-15)
    c, (a0, a1) = np.array(region.center_m), np.array(region.axes)
    for i, name in enumerate(("x_m", "y_m", "z_m")):
        np.testing.assert_allclose(ds[name].values, c[i] + u * a0[i] + v * a1[i], rtol=0,
                                   atol=1e-15)
        assert ds[name].dims == ("v_m", "u_m")
    assert ds.attrs["region_center_m"] == [0.3, 0.0, 0.1]
    assert ds.attrs["cell_measure"] == pytest.approx(0.01, rel=1e-12)


def test_tilted_rectangle_coords():
    arm = ir.planar_chain([0.6, 0.45], [1.0, 0.5], plane_tilt_deg=30.0, base_yaw_deg=40.0)
    a0, a1 = arm.task_axes
    centre = 0.5 * a0 + 0.2 * a1
    region = ir.Rectangle(tuple(centre), (tuple(a0), tuple(a1)), (0.4, 0.2), 0.1)
    ds = ir.metric_map(arm, region)
    u, v = ds["u_m"].values[None, :], ds["v_m"].values[:, None]
    for i, name in enumerate(("x_m", "y_m", "z_m")):
        np.testing.assert_allclose(ds[name].values, centre[i] + u * a0[i] + v * a1[i],
                                   rtol=0, atol=1e-15)
    assert np.all(ds["status"].values == OK)


def test_pointset_coords():
    arm = ir.planar_chain([0.6, 0.45], [1.0, 0.5])
    pts = ((0.5, 0.0, 0.3), (0.2, 0.0, 0.6), (2.0, 0.0, 0.0))
    ds = ir.metric_map(arm, ir.PointSet(pts))
    assert ds["status"].dims == ("point",)
    for i, name in enumerate(("x_m", "y_m", "z_m")):
        assert np.array_equal(ds[name].values, np.array(pts)[:, i])
    assert list(ds["status"].values) == [0, 0, 1]


def test_every_variable_has_units_and_long_name(sorter_map):
    ds = sorter_map
    for name in list(ds.data_vars) + ["x_m", "y_m", "z_m"]:
        attrs = ds[name].attrs
        assert isinstance(attrs.get("units"), str), name
        assert isinstance(attrs.get("long_name"), str) and attrs["long_name"], name
    # SI units of the physical quantities (arm-model.md: SI inside)
    expected = {"principal_mass": "kg", "mass_along_approach": "kg", "q": "rad",
                "static_torque": "N m", "accel_capability": "m s^-2", "isotropy": "1",
                "x_m": "m"}
    for name, units in expected.items():
        assert ds[name].attrs["units"] == units, name


def test_map_attrs_record_the_inputs(sorter, sorter_map):
    attrs = sorter_map.attrs
    assert attrs["design"] == "sorter_planar"
    assert attrs["region_kind"] == "rectangle"
    assert attrs["accel_mps2"] == 3.0
    assert attrs["approach"] == [0.0, 0.0, -1.0]
    assert attrs["payload_kg"] == 0.1                     # the design file's payload
    assert attrs["gravity_mps2"] == [0.0, 0.0, -9.80665]  # standard gravity, CGPM 1901 [C]
    assert "caution" in attrs


# ---------------------------------------------------------------------------
# netCDF round trip and atomic save
# ---------------------------------------------------------------------------
def test_netcdf_round_trip(sorter_map, tmp_path):
    path = ir.save_results(sorter_map, tmp_path / "sorter.nc")
    assert Path(path).exists()
    back = ir.load_results(path)
    xr.testing.assert_identical(back, sorter_map)
    for name in sorter_map.variables:
        assert back[name].dtype == sorter_map[name].dtype, name
        for key, value in sorter_map[name].attrs.items():
            assert np.array_equal(np.asarray(back[name].attrs[key]), np.asarray(value)), (name, key)
    assert back["near_singular"].dtype == np.bool_
    assert back["status"].dtype == np.int8
    for key, value in sorter_map.attrs.items():
        assert np.array_equal(np.asarray(back.attrs[key]), np.asarray(value)), key
    assert sorted(os.listdir(tmp_path)) == ["sorter.nc"]


def test_failed_save_leaves_no_temp_file_and_keeps_old_file(sorter_map, tmp_path):
    target = tmp_path / "map.nc"
    ir.save_results(sorter_map, target)
    before = target.read_bytes()
    broken = sorter_map.copy()
    broken.attrs["not_storable"] = {"a": 1}             # netCDF attributes cannot be tables
    with pytest.raises((TypeError, ValueError)):
        ir.save_results(broken, target)
    assert sorted(os.listdir(tmp_path)) == ["map.nc"]   # no temporary file left behind
    assert target.read_bytes() == before                # the old file is untouched
    xr.testing.assert_identical(ir.load_results(target), sorter_map)


def test_failed_first_save_creates_nothing(sorter_map, tmp_path):
    broken = sorter_map.copy()
    broken.attrs["not_storable"] = {"a": 1}
    with pytest.raises((TypeError, ValueError)):
        ir.save_results(broken, tmp_path / "new.nc")
    assert os.listdir(tmp_path) == []


# ---------------------------------------------------------------------------
# a Task's acceleration, approach and payload; explicit keywords override them
# ---------------------------------------------------------------------------
def test_task_values_are_used(sorter, region):
    task = ir.Task(region, accel_mps2=4.0, payload_kg=0.5, approach=(1.0, 0.0, 0.0))
    from_task = ir.metric_map(sorter, task)
    explicit = ir.metric_map(sorter, region, accel_mps2=4.0, payload_kg=0.5,
                             approach=(1.0, 0.0, 0.0))
    xr.testing.assert_identical(from_task, explicit)
    assert from_task.attrs["accel_mps2"] == 4.0 and from_task.attrs["payload_kg"] == 0.5
    # and they matter: without them the map differs
    plain = ir.metric_map(sorter, region)
    ok = from_task["status"].values == OK
    assert "mass_along_approach" not in plain
    assert np.all(from_task["utilisation"].values[ok] > plain["utilisation"].values[ok])


def test_explicit_keywords_override_task(sorter, region):
    task = ir.Task(region, accel_mps2=4.0, payload_kg=0.5, approach=(1.0, 0.0, 0.0))
    overridden = ir.metric_map(sorter, task, accel_mps2=1.0, payload_kg=0.0,
                               approach=(0.0, 0.0, 1.0))
    explicit = ir.metric_map(sorter, region, accel_mps2=1.0, payload_kg=0.0,
                             approach=(0.0, 0.0, 1.0))
    xr.testing.assert_identical(overridden, explicit)
    assert overridden.attrs["accel_mps2"] == 1.0 and overridden.attrs["payload_kg"] == 0.0
    # only one keyword given: the task supplies the others
    partial = ir.metric_map(sorter, task, accel_mps2=1.0)
    xr.testing.assert_identical(partial, ir.metric_map(sorter, region, accel_mps2=1.0,
                                                       payload_kg=0.5,
                                                       approach=(1.0, 0.0, 0.0)))


def test_design_task_drives_the_default_map(sorter):
    # sorter_planar.toml: [task] accel_mps2 = 3.0, approach = [0, 0, -1]
    ds = ir.metric_map(sorter, sorter.task)
    assert ds.attrs["accel_mps2"] == 3.0
    assert ds.attrs["approach"] == [0.0, 0.0, -1.0]
    assert ds["status"].shape == (49, 61)                 # 0.24/0.005 + 1 by 0.30/0.005 + 1


def test_bad_map_inputs(sorter, region):
    with pytest.raises(ValueError, match=r"`accel_mps2` must be a finite number >= 0"):
        ir.metric_map(sorter, region, accel_mps2=-1.0)
    with pytest.raises(ValueError, match=r"no part in the task span"):
        ir.metric_map(sorter, region, approach=(0.0, 1.0, 0.0))


# ---------------------------------------------------------------------------
# payload identity: Lambda(payload m_L) = Lambda(no payload) + m_L I
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("payload", [0.25, 1.7])
def test_payload_identity(sorter, task, payload):
    # references.md item 4 [D]: a point payload m_L at the tool point adds m_L I to Lambda
    bare = ir.metric_map(sorter, task, payload_kg=0.0)
    loaded = ir.metric_map(sorter, task, payload_kg=payload)
    assert np.array_equal(bare["status"].values, loaded["status"].values)
    ok = bare["status"].values == OK
    np.testing.assert_allclose(loaded["q"].values[ok], bare["q"].values[ok], atol=1e-9)
    np.testing.assert_allclose(loaded["principal_mass"].values[ok] - bare["principal_mass"].values[ok],
                               payload, rtol=1e-9, atol=1e-9)
    # the mass along u is 1 / (u^T Lambda^-1 u) (references.md item 4), so it does not
    # simply grow by m_L; with Lambda = sum_i lambda_i d_i d_i^T (principal masses and
    # directions of the bare arm) it is 1 / sum_i (u . d_i)^2 / (lambda_i + m_L)
    u = np.array([0.0, 0.0, -1.0])
    lam = bare["principal_mass"].values[ok]
    proj = np.einsum("c,pck->pk", u, bare["principal_direction"].values[ok])
    np.testing.assert_allclose(bare["mass_along_approach"].values[ok],
                               1.0 / np.sum(proj**2 / lam, axis=-1), rtol=1e-9)
    np.testing.assert_allclose(loaded["mass_along_approach"].values[ok],
                               1.0 / np.sum(proj**2 / (lam + payload), axis=-1), rtol=1e-9)
    assert loaded.attrs["moving_mass_kg"] - bare.attrs["moving_mass_kg"] == pytest.approx(payload)


def test_payload_identity_spatial():
    arm = ir.load_design(DESIGNS / "kestrel_a.toml")
    pts = ir.PointSet(((0.4, 0.0, 0.3), (0.3, 0.2, 0.1), (0.2, -0.3, 0.4)))
    bare = ir.metric_map(arm, pts, payload_kg=0.0, posture="nearest")
    loaded = ir.metric_map(arm, pts, payload_kg=0.8, posture="nearest")
    ok = bare["status"].values == OK
    assert ok.all()
    np.testing.assert_allclose(loaded["q"].values, bare["q"].values, atol=1e-9)
    np.testing.assert_allclose(loaded["principal_mass"].values - bare["principal_mass"].values,
                               0.8, rtol=1e-9, atol=1e-9)
