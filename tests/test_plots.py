"""The plotting layer (inertia_review.plots): artists carry the core's numbers.

Every plot is checked from outside: the drawn arrays are compared with the map
Dataset's variables or recomputed through the public core (``ir.principal_masses``,
``ir.mass_along``, ``ir.torque_headroom``, ``arm.link_frames``), never with the
plotting code's own helpers. Where a closed form exists the artists are checked
against it (references.md, status in brackets):

- Planar 2R "case A" (uniform rods m1 = 2 kg, m2 = 1 kg, l1 = 1 m, l2 = 0.8 m):
  gravity torque at q = (0, 0) is (23.53596, 3.92266) N m (Spong, Hutchinson &
  Vidyasagar, Robot Modeling and Control, 2006, ch. 7 [M formula, re-derived D];
  references.md item 1); with peak ratings (40, 10) N m the utilisation is
  (0.588399, 0.392266) (references.md item 4 [D]).
- Case A at q = (0, pi/2): Lambda = diag(m2/3, m1/3 + m2) = diag(1/3, 5/3) kg in the
  frame (across link 2, along link 2), an exact consequence of Khatib's definition
  (Khatib 1987, eq. 18 [S]: confirmed only through a secondary summary; oracle
  derived in references.md items 4 and 8 [D]).
- Ellipse convention: Asada's generalized inertia ellipsoid x^T Lambda x = 1 has
  semi-axes 1 / sqrt(lambda_i) (Asada 1983 [C abstract]; references.md item 4).
  Its shadow on a plane has support function 1 / sqrt(m_u) along in-plane unit u,
  with m_u = 1 / (u^T Lambda^-1 u) the effective mass (Khatib 1995 [M formula]);
  this is plain ellipse geometry (common practice, no source) checked against
  ``ir.mass_along``.

All designs are invented test data. Agg backend; every test starts with no open
figure and must not call ``plt.show()``.
"""

import subprocess
import sys
from pathlib import Path
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest
from numpy.testing import assert_allclose

import inertia_review as ir

G_N = 9.80665  # standard gravity, 3rd CGPM (1901) [C], references.md item 7


# --------------------------------------------------------------------------
# fixtures
# --------------------------------------------------------------------------
@pytest.fixture(scope="module")
def irp(plt):                     # plt: headless pyplot from tests/conftest.py
    import inertia_review.plots as plots

    return plots


@pytest.fixture(autouse=True)
def no_figure_leak(plt, monkeypatch):
    """No figure may be open when a test starts (nothing leaked from earlier tests or
    fixtures), plt.show() must never be called, and every figure is closed afterwards."""
    assert plt.get_fignums() == [], f"figures leaked into this test: {plt.get_fignums()}"

    def forbidden_show(*args, **kwargs):
        raise AssertionError("plotting code must never call plt.show()")

    monkeypatch.setattr(plt, "show", forbidden_show)
    yield
    plt.close("all")


def _planar_arm(**extra):
    """Invented planar 2R arm in a vertical plane (world x-z), all joints rated."""
    options = dict(motor_masses_kg=[0.0, 0.4], payload_kg=0.2, peak_torque_Nm=[20.0, 6.0],
                   continuous_torque_Nm=[9.0, 3.0], name="plot_planar")
    options.update(extra)
    return ir.planar_chain([0.4, 0.3], [1.2, 0.6], **options)


def _rectangle(arm, center, size, spacing):
    return ir.Rectangle(center_m=center, axes=tuple(map(tuple, arm.task_axes)), size_m=size,
                        spacing_m=spacing)


@pytest.fixture(scope="module")
def planar():
    return _planar_arm()


@pytest.fixture(scope="module")
def planar_map(planar):
    """16 x 13 grid at 40 mm, partly out of reach; near-singular flag at isotropy < 0.2
    so that some points are flagged; 2 m/s^2 required acceleration."""
    region = _rectangle(planar, (0.35, 0.0, 0.1), (0.6, 0.5), 0.04)
    ds = ir.metric_map(planar, region, accel_mps2=2.0, approach=(0.0, 0.0, -1.0),
                       near_singular_threshold=0.2)
    ok = ds["status"].values == 0
    assert ok.any() and not ok.all(), "test precondition: the map is partly solved"
    assert ds["near_singular"].values.any(), "test precondition: some points are flagged"
    return ds


@pytest.fixture(scope="module")
def inner_map(planar):
    """Small region well inside the workspace: every point solved."""
    ds = ir.metric_map(planar, _rectangle(planar, (0.4, 0.0, 0.1), (0.12, 0.12), 0.04))
    assert (ds["status"].values == 0).all(), "test precondition: all points solved"
    return ds


@pytest.fixture(scope="module")
def kestrel():
    """The invented demo designs kestrel_a/b/c on one small region (40 mm spacing)."""
    from pathlib import Path

    root = Path(__file__).resolve().parents[1] / "designs"
    arms = [ir.load_design(root / f"kestrel_{c}.toml") for c in "abc"]
    region = ir.Rectangle(center_m=(0.38, 0.05, 0.2), axes=((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)),
                          size_m=(0.44, 0.4), spacing_m=0.04)
    maps = [ir.metric_map(a, region, accel_mps2=2.0) for a in arms]
    return arms, maps


def case_a_arm(**extra):
    """references.md case A as a planar chain in the world x-z plane (gravity along -z)."""
    return ir.planar_chain([1.0, 0.8], [2.0, 1.0], name="case_a", **extra)


def _grid(ds, name, *trailing):
    return np.asarray(ds[name].transpose("v_m", "u_m", *trailing).values)


def _ok(ds):
    # solved points: 'ok' and 'branch_seam' (solved, next to a jump of the solution)
    return np.isin(_grid(ds, "status"), ir.SOLVED)


def _n_colorbars(fig):
    # matplotlib labels every colour-bar Axes "<colorbar>"
    return sum(a.get_label() == "<colorbar>" for a in fig.axes)


def _support(width, height, angle_deg, u):
    """Half-width of an ellipse's shadow on unit direction u (2,), plain geometry."""
    t = np.radians(angle_deg)
    e1 = np.array([np.cos(t), np.sin(t)])
    e2 = np.array([-np.sin(t), np.cos(t)])
    return np.sqrt((0.5 * width * (u @ e1)) ** 2 + (0.5 * height * (u @ e2)) ** 2)


def _axis_angle_diff(a_deg, b_deg):
    """Difference of two undirected axis angles, in [0, 90] deg."""
    d = np.mod(np.asarray(a_deg) - np.asarray(b_deg), 180.0)
    return np.minimum(d, 180.0 - d)


# --------------------------------------------------------------------------
# import hygiene
# --------------------------------------------------------------------------
def test_import_changes_no_global_state():
    # style.md anti-pattern 2: no import-time side effects (backend, rcParams, pyplot).
    # ("backend" is skipped: reading it makes matplotlib resolve and import a backend)
    code = (
        "import sys, matplotlib as mpl\n"
        "def snapshot():\n"
        "    return {k: repr(mpl.rcParams[k]) for k in mpl.rcParams if k != 'backend'}\n"
        "before = snapshot()\n"
        "import inertia_review.plots\n"
        "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot imported at import time'\n"
        "after = snapshot()\n"
        "changed = sorted(k for k in before if before[k] != after[k])\n"
        "assert not changed, changed\n"
        "print('ok')\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "ok"


def test_public_names(irp):
    expected = {"plot_metric_map", "plot_ellipse_field", "plot_principal_directions",
                "plot_small_multiples", "plot_difference_map", "plot_headroom_map",
                "plot_tradeoff", "MassEllipseDisplay", "TorqueBarsDisplay"}
    assert expected <= set(irp.__all__)
    for name in irp.__all__:
        assert hasattr(irp, name), name


# --------------------------------------------------------------------------
# plot_metric_map
# --------------------------------------------------------------------------
def test_metric_map_mesh_equals_map_values_where_solved(irp, planar_map):
    art = irp.plot_metric_map(planar_map, "mass_ratio")
    arr = art.mesh.get_array()
    ok = _ok(planar_map)
    expected = _grid(planar_map, "mass_ratio")
    assert arr.shape == ok.shape
    assert_allclose(np.ma.getdata(arr)[ok], expected[ok], rtol=0, atol=0)
    assert np.array_equal(np.ma.getmaskarray(arr), ~ok)
    # label from the variable's attrs, in screen units ("1" is shown as "-")
    assert art.colorbar.ax.get_ylabel() == "min/max apparent mass ratio [-]"
    assert _n_colorbars(art.ax.figure) == 1


def test_metric_map_positions_in_mm_of_world_coordinates(irp, planar_map):
    # The planar arm's region axes are world x and z: cell centres must sit at the
    # map's own world coordinates x_m, z_m, in mm.
    art = irp.plot_metric_map(planar_map, "isotropy")
    edges = art.mesh.get_coordinates()                     # (nv+1, nu+1, 2) cell corners
    centres_x = 0.5 * (edges[0, 1:, 0] + edges[0, :-1, 0])
    centres_z = 0.5 * (edges[1:, 0, 1] + edges[:-1, 0, 1])
    assert_allclose(centres_x, 1000.0 * _grid(planar_map, "x_m")[0, :], atol=1e-9)
    assert_allclose(centres_z, 1000.0 * _grid(planar_map, "z_m")[:, 0], atol=1e-9)
    assert art.ax.get_xlabel() == "x [mm]"
    assert art.ax.get_ylabel() == "height z [mm]"


def test_metric_map_angles_shown_in_degrees(irp, planar_map):
    art = irp.plot_metric_map(planar_map, "q", select={"joint": "joint2"})
    ok = _ok(planar_map)
    q2 = planar_map["q"].sel(joint="joint2").transpose("v_m", "u_m").values
    assert_allclose(np.ma.getdata(art.mesh.get_array())[ok], np.degrees(q2[ok]), rtol=1e-12)
    assert art.colorbar.ax.get_ylabel().endswith("[deg]")
    assert "joint2" in art.colorbar.ax.get_ylabel()


def test_metric_map_reach_boundary_and_singular_hatch(irp, planar_map, inner_map):
    art = irp.plot_metric_map(planar_map, "mass_ratio")
    assert art.reach is not None and list(art.reach.levels) == [0.5]
    # one hatched square per flagged solved grid point, centred on it (mm)
    flagged = _grid(planar_map, "near_singular").astype(bool) & _ok(planar_map)
    polys = art.singular.get_paths()
    assert len(polys) == int(flagged.sum())
    assert art.singular.get_hatch() == "xxxx"
    centres = np.array([p.vertices[:4].mean(axis=0) for p in polys])
    expected = 1000.0 * np.column_stack([_grid(planar_map, "x_m")[flagged],
                                         _grid(planar_map, "z_m")[flagged]])
    assert_allclose(np.sort(centres, axis=0), np.sort(expected, axis=0), atol=1e-9)
    # a fully solved map without flags has neither
    inner = irp.plot_metric_map(inner_map, "mass_ratio")
    assert inner.reach is None and inner.singular is None


def test_metric_map_probe_draws_the_arm_at_the_solved_configuration(irp, planar, planar_map):
    ok = _ok(planar_map)
    iv, iu = map(int, np.argwhere(ok)[len(np.argwhere(ok)) // 2])
    art = irp.plot_metric_map(planar_map, "mass_ratio", arm=planar, probe=(iu, iv))
    q = _grid(planar_map, "q", "joint")[iv, iu]
    origins, _ = planar.link_frames(q)
    points = np.vstack([origins, planar.tool_position(q)])
    # plane axes are world x (across) and z (up); positions in mm
    assert_allclose(art.arm_line.get_xdata(), 1000.0 * points[:, 0], atol=1e-9)
    assert_allclose(art.arm_line.get_ydata(), 1000.0 * points[:, 2], atol=1e-9)
    # the tool end is the probed grid point
    target = [1000.0 * _grid(planar_map, "x_m")[iv, iu], 1000.0 * _grid(planar_map, "z_m")[iv, iu]]
    assert_allclose([art.probe_marker.get_xdata()[0], art.probe_marker.get_ydata()[0]], target,
                    atol=1e-9)
    assert_allclose(points[-1, [0, 2]] * 1000.0, target, atol=1e-6)
    # the same point given as (u, v) in m
    u = float(planar_map["u_m"].values[iu])
    v = float(planar_map["v_m"].values[iv])
    again = irp.plot_metric_map(planar_map, "mass_ratio", arm=planar, probe=(u, v))
    assert_allclose(again.arm_line.get_xydata(), art.arm_line.get_xydata())


def test_metric_map_probe_errors(irp, planar, planar_map):
    ok = _ok(planar_map)
    iv, iu = map(int, np.argwhere(~ok)[0])
    with pytest.raises(ValueError, match=r"is not solved \(status \d: \w+\)"):
        irp.plot_metric_map(planar_map, arm=planar, probe=(iu, iv))
    with pytest.raises(ValueError, match="`probe` needs `arm`"):
        irp.plot_metric_map(planar_map, probe=(0, 0))
    with pytest.raises(ValueError, match="outside the grid"):
        irp.plot_metric_map(planar_map, arm=planar, probe=(5.0, 0.0))
    other = case_a_arm()
    good = tuple(int(i) for i in np.argwhere(ok)[0][::-1])
    with pytest.raises(ValueError, match="does not reach the map's point"):
        irp.plot_metric_map(planar_map, arm=other, probe=good)


def test_metric_map_bad_names(irp, planar_map):
    with pytest.raises(KeyError, match="No map variable named 'mass_rato'. Variables: .*"
                                       "mass_ratio"):
        irp.plot_metric_map(planar_map, "mass_rato")
    with pytest.raises(ValueError, match=r"has dims \['joint'\] besides the grid: pass "
                                         r"`select`"):
        irp.plot_metric_map(planar_map, "utilisation")


def test_point_list_maps_are_refused(irp, planar):
    ds = ir.metric_map(planar, ir.PointSet(((0.4, 0.0, 0.1), (0.3, 0.0, 0.2))))
    with pytest.raises(ValueError, match="is not a plane grid"):
        irp.plot_metric_map(ds)


# --------------------------------------------------------------------------
# passing an Axes: draw into it, no new figure, no show()
# --------------------------------------------------------------------------
def _callers(irp, planar, planar_map, kestrel, sweep):
    arms, maps = kestrel
    return {
        "metric_map": lambda ax: irp.plot_metric_map(planar_map, ax=ax, arm=planar,
                                                     probe=(8, 6)).ax,
        "ellipse_field": lambda ax: irp.plot_ellipse_field(planar_map, planar, every=3,
                                                           ax=ax, background="isotropy").ax,
        "principal_directions": lambda ax: irp.plot_principal_directions(planar_map, every=3,
                                                                         ax=ax).ax,
        "difference_map": lambda ax: irp.plot_difference_map(maps[1], maps[0], ax=ax).ax,
        "headroom_map": lambda ax: irp.plot_headroom_map(planar_map, ax=ax).ax,
        "tradeoff": lambda ax: irp.plot_tradeoff(sweep, "gci", ax=ax).ax,
        "mass_display": lambda ax: irp.MassEllipseDisplay.from_arm(planar, [0.3, -1.2],
                                                                   ax=ax).ax_,
        "torque_display": lambda ax: irp.TorqueBarsDisplay.from_arm(planar, [0.3, -1.2],
                                                                    accel_mps2=1.0, ax=ax).ax_,
    }


@pytest.fixture(scope="module")
def sweep(planar):
    region = _rectangle(planar, (0.35, 0.0, 0.1), (0.3, 0.24), 0.04)
    return ir.Sweep(planar, vary={"joints[1].link_length_m": [0.25, 0.3, 0.35],
                                  "tool.payload_kg": [0.0, 0.5]},
                    region=region, progress=False).run(executor=ThreadPoolExecutor(1))


CALLERS = ["metric_map", "ellipse_field", "principal_directions", "difference_map",
           "headroom_map", "tradeoff", "mass_display", "torque_display"]


@pytest.mark.parametrize("which", CALLERS)
def test_given_axes_is_used_and_no_figure_is_made(plt, irp, planar, planar_map, kestrel, sweep,
                                                  which):
    fig, ax = plt.subplots()
    before = list(plt.get_fignums())
    drawn_on = _callers(irp, planar, planar_map, kestrel, sweep)[which](ax)
    assert drawn_on is ax
    assert plt.get_fignums() == before
    assert ax.get_children(), "nothing was drawn"


@pytest.mark.parametrize("which", CALLERS)
def test_without_axes_one_new_figure(plt, irp, planar, planar_map, kestrel, sweep, which):
    drawn_on = _callers(irp, planar, planar_map, kestrel, sweep)[which](None)
    assert plt.get_fignums() == [drawn_on.figure.number]


def test_drawing_restores_rcparams(plt, irp, planar_map):
    # Our look is applied only while drawing: a user's own settings survive a plot.
    import matplotlib as mpl

    def snapshot():
        return {k: repr(mpl.rcParams[k]) for k in mpl.rcParams if k != "backend"}

    with mpl.rc_context({"font.size": 13.0, "axes.titlesize": 15.0, "hatch.color": "red"}):
        before = snapshot()
        irp.plot_headroom_map(planar_map)
        irp.MassEllipseDisplay.from_arm(case_a_arm(), [0.0, 1.0])
        after = snapshot()
    assert {k for k in before if before[k] != after[k]} == set()


def test_style_context_keeps_the_interactive_mode(plt, irp):
    # Under a notebook's inline backend the first figure of a session makes IPython switch
    # interactive mode on; a plain rc_context would switch it off again on exit, and no
    # later figure would be shown. The look is restored, the interactive mode is kept.
    import matplotlib as mpl

    was = mpl.is_interactive()
    try:
        for start in (False, True):
            mpl.interactive(start)
            with irp.plot_style():
                assert mpl.rcParams["font.size"] == irp._style.RC["font.size"]
                mpl.interactive(not start)          # what the backend does while inside
            assert mpl.is_interactive() is (not start)
            assert mpl.rcParams["font.size"] == mpl.rcParamsDefault["font.size"]
        with pytest.raises(RuntimeError), irp.plot_style():     # restored on errors too
            raise RuntimeError("drawing failed")
        assert mpl.rcParams["font.size"] == mpl.rcParamsDefault["font.size"]
    finally:
        mpl.interactive(was)


def test_cycle_torques_figure_through_pyplot_with_the_caution(plt, irp):
    from inertia_review.studies._cautions import TORQUE_CAUTION

    arm = ir.load_design(Path(__file__).resolve().parents[1] / "designs" / "kestrel_a.toml")
    result = ir.cycle_torques(arm, ir.design_cycles(arm)[0], sample_rate_hz=50.0)
    art = irp.plot_cycle_torques(result)
    assert plt.get_fignums() == [art.figure.number], "a new figure is a pyplot figure"
    assert " ".join(art.caution.get_text().split()) == " ".join(TORQUE_CAUTION.split())
    for j, ax in enumerate(art.axes):     # the drawn torque is the result's, per joint
        assert_allclose(art.lines[j].get_ydata(), result.tau[:, j])
    assert art.axes[-1].get_xlabel() == "time [s]"
    # into given Axes: no new figure, the caution under the last panel
    fig, axes = plt.subplots(len(art.axes), 1)
    given = irp.plot_cycle_torques(result, axes=axes)
    assert given.figure is fig and given.caution is not None
    assert len(plt.get_fignums()) == 2
    assert irp.plot_cycle_torques(result, axes=axes, caution=False).caution is None
    with pytest.raises(ValueError, match="expected 3 Axes"):
        irp.plot_cycle_torques(result, axes=axes[:2])


# --------------------------------------------------------------------------
# ellipses and principal directions
# --------------------------------------------------------------------------
def _sampled(ds, every):
    """(iv, iu) of the solved points on the every-th grid lines (documented sampling)."""
    ok = _ok(ds)
    sub = np.zeros_like(ok)
    sub[::every, ::every] = True
    return np.argwhere(ok & sub)


@pytest.mark.parametrize("every", [1, 3])
def test_ellipse_field_sizes_from_core_principal_masses(irp, planar, planar_map, every):
    art = irp.plot_ellipse_field(planar_map, planar, every=every)
    idx = _sampled(planar_map, every)
    assert len(art.ellipses.get_widths()) == len(idx)
    assert np.array_equal(np.asarray(art.indices), idx)
    # recompute through the core at the map's solved configurations
    q = _grid(planar_map, "q", "joint")[idx[:, 0], idx[:, 1]]
    pm = ir.principal_masses(planar, q)
    s = art.scale
    # Asada's GIE: semi-axes 1/sqrt(mass); the lightest direction is the major axis
    assert_allclose(art.ellipses.get_widths(), 2.0 * s / np.sqrt(pm.masses[:, 0]), rtol=1e-9)
    assert_allclose(art.ellipses.get_heights(), 2.0 * s / np.sqrt(pm.masses[:, 1]), rtol=1e-9)
    # major axis along the lightest principal direction (world x, z -> screen)
    d0 = pm.directions[:, :, 0]
    expected_angle = np.degrees(np.arctan2(d0[:, 2], d0[:, 0]))
    distinct = pm.masses[:, 1] > 1.05 * pm.masses[:, 0]
    assert distinct.any()
    assert_allclose(_axis_angle_diff(art.ellipses.get_angles()[distinct],
                                     expected_angle[distinct]), 0.0, atol=1e-6)
    # centred on the sampled grid points, in mm
    expected_xy = 1000.0 * np.column_stack([_grid(planar_map, "x_m")[idx[:, 0], idx[:, 1]],
                                            _grid(planar_map, "z_m")[idx[:, 0], idx[:, 1]]])
    assert_allclose(art.ellipses.get_offsets(), expected_xy, atol=1e-9)
    # documented default scale: the longest semi-axis is 0.45 of the sample pitch (40 mm)
    assert np.max(art.ellipses.get_widths()) == pytest.approx(0.9 * 40.0 * every, rel=1e-9)


def test_ellipse_field_explicit_scale(irp, planar, planar_map):
    art = irp.plot_ellipse_field(planar_map, every=4, scale=10.0)
    idx = _sampled(planar_map, 4)
    q = _grid(planar_map, "q", "joint")[idx[:, 0], idx[:, 1]]
    masses = ir.principal_masses(planar, q).masses
    assert art.scale == 10.0
    assert_allclose(art.ellipses.get_widths(), 20.0 / np.sqrt(masses[:, 0]), rtol=1e-9)
    with pytest.raises(ValueError, match="`every` must be an integer >= 1"):
        irp.plot_ellipse_field(planar_map, every=0)


def test_spatial_ellipse_is_the_shadow_checked_with_mass_along(irp, kestrel):
    # kestrel_a has a 3-D task; the ellipse drawn in the x-z region plane must have
    # support function scale / sqrt(m_u) along every in-plane direction u, with m_u
    # from the core's ir.mass_along (Khatib 1995 effective mass [M formula]).
    arms, maps = kestrel
    arm, ds = arms[0], maps[0]
    art = irp.plot_ellipse_field(ds, arm, every=3)
    idx = np.asarray(art.indices)
    assert len(idx) == len(_sampled(ds, 3)) > 0
    q = _grid(ds, "q", "joint")[idx[:, 0], idx[:, 1]]
    widths, heights = art.ellipses.get_widths(), art.ellipses.get_heights()
    angles = art.ellipses.get_angles()
    for theta in np.radians([0.0, 30.0, 75.0, 90.0, 140.0]):
        u_plane = np.array([np.cos(theta), np.sin(theta)])
        u_world = np.array([np.cos(theta), 0.0, np.sin(theta)])
        m_u = ir.mass_along(arm, q, np.broadcast_to(u_world, q.shape[:-1] + (3,)))
        expected = art.scale / np.sqrt(m_u)
        got = np.array([_support(w, h, a, u_plane) for w, h, a in zip(widths, heights, angles)])
        assert_allclose(got, expected, rtol=1e-7)


def test_principal_directions_length_by_mass(irp, planar, planar_map):
    art = irp.plot_principal_directions(planar_map, every=2)
    idx = _sampled(planar_map, 2)
    q = _grid(planar_map, "q", "joint")[idx[:, 0], idx[:, 1]]
    pm = ir.principal_masses(planar, q)
    assert len(art.quivers) == 2
    for i, quiver in enumerate(art.quivers):
        good = np.isfinite(pm.masses[:, i])
        assert np.array_equal(np.asarray(art.indices[i]), idx[good])
        u, v = np.asarray(quiver.U), np.asarray(quiver.V)
        d = pm.directions[good][:, :, i]
        m = pm.masses[good, i]
        assert len(u) == int(good.sum())
        # length = mass (in-plane directions are unit); direction parallel (sign free)
        assert_allclose(np.hypot(u, v), m, rtol=1e-9)
        assert_allclose(u * d[:, 2] - v * d[:, 0], 0.0, atol=1e-9 * m.max())
        assert quiver.scale == art.scale


def test_principal_directions_mark_unbounded_masses(irp, planar):
    # Grid points at full stretch (r = l1 + l2 = 0.7 m) and fully folded (r = 0.1 m):
    # the mass along the link is unbounded there (arm-model.md "Singularities").
    region = _rectangle(planar, (0.35, 0.0, 0.0), (0.7, 0.1), 0.05)
    ds = ir.metric_map(planar, region)
    masses = _grid(ds, "principal_mass", "principal")
    unbounded = _ok(ds) & ~np.all(np.isfinite(masses), axis=-1)
    assert unbounded.any(), "test precondition: the core reports an unbounded mass"
    art = irp.plot_principal_directions(ds, every=1)
    assert art.unbounded is not None
    expected = 1000.0 * np.column_stack([_grid(ds, "x_m")[unbounded], _grid(ds, "z_m")[unbounded]])
    assert_allclose(np.sort(art.unbounded.get_xydata(), axis=0), np.sort(expected, axis=0))
    finite_lightest = np.isfinite(masses[..., 0]) & _ok(ds)
    assert len(art.quivers[0].U) == int(finite_lightest.sum())


# --------------------------------------------------------------------------
# small multiples and differences
# --------------------------------------------------------------------------
def test_small_multiples_share_one_scale_and_one_colorbar(plt, irp, kestrel):
    arms, maps = kestrel
    art = irp.plot_small_multiples(maps, "mass_ratio")
    solved = np.concatenate([_grid(ds, "mass_ratio")[_ok(ds)] for ds in maps])
    for mesh in art.meshes:
        assert mesh.norm.vmin == pytest.approx(solved.min(), rel=1e-12)
        assert mesh.norm.vmax == pytest.approx(solved.max(), rel=1e-12)
    for mesh, ds in zip(art.meshes, maps):
        assert_allclose(np.ma.getdata(mesh.get_array())[_ok(ds)], _grid(ds, "mass_ratio")[_ok(ds)])
    assert _n_colorbars(art.figure) == 1
    assert [a.get_title() for a in art.axes] == [a.name for a in arms]
    assert art.colorbar.ax.get_ylabel() == "min/max apparent mass ratio [-]"
    assert plt.get_fignums() == [art.figure.number]


def test_small_multiples_into_given_axes(plt, irp, kestrel):
    _, maps = kestrel
    fig, axes = plt.subplots(1, 3)
    art = irp.plot_small_multiples(maps, "isotropy", axes=axes, vmin=0.0, vmax=1.0)
    assert plt.get_fignums() == [fig.number]
    assert [m.mesh.axes for m in art.maps] == list(axes)
    assert all(m.norm.vmin == 0.0 and m.norm.vmax == 1.0 for m in art.meshes)
    assert _n_colorbars(fig) == 1
    with pytest.raises(ValueError, match="one Axes per map: 3 maps, 2 axes"):
        irp.plot_small_multiples(maps, axes=axes[:2])


def test_difference_map_is_b_minus_a_centred_at_zero(irp, kestrel):
    _, (ds_a, ds_b, _) = kestrel
    art = irp.plot_difference_map(ds_b, ds_a, "mass_ratio")
    both = _ok(ds_a) & _ok(ds_b)
    diff = _grid(ds_b, "mass_ratio") - _grid(ds_a, "mass_ratio")
    arr = art.mesh.get_array()
    assert_allclose(np.ma.getdata(arr)[both], diff[both], rtol=0, atol=1e-15)
    assert np.array_equal(np.ma.getmaskarray(arr), ~both)
    assert art.mesh.norm(0.0) == pytest.approx(0.5)
    assert art.mesh.norm.vmin == -art.mesh.norm.vmax
    assert art.mesh.norm.vmax == pytest.approx(np.max(np.abs(diff[both])))
    assert art.colorbar.ax.get_ylabel() == "Δ min/max apparent mass ratio [-]"
    assert "kestrel_b − kestrel_a" in art.ax.get_title()


def test_difference_map_of_a_map_with_itself_and_of_other_grids(irp, planar_map, kestrel):
    art = irp.plot_difference_map(planar_map, planar_map, "isotropy")
    data = np.ma.getdata(art.mesh.get_array())[_ok(planar_map)]
    assert np.all(data == 0.0)
    assert art.mesh.norm(0.0) == pytest.approx(0.5)
    with pytest.raises(ValueError, match="different grids cannot be subtracted"):
        irp.plot_difference_map(kestrel[1][0], planar_map)


# --------------------------------------------------------------------------
# headroom
# --------------------------------------------------------------------------
def test_headroom_map(irp, planar_map):
    art = irp.plot_headroom_map(planar_map)
    ok = _ok(planar_map)
    margin = _grid(planar_map, "min_margin")
    assert_allclose(np.ma.getdata(art.mesh.get_array())[ok], margin[ok], rtol=0, atol=0)
    assert art.mesh.norm(0.0) == pytest.approx(0.5)
    # one hatched zone per joint that limits somewhere, cells where it limits
    limiting = _grid(planar_map, "limiting_joint")
    names = list(planar_map["joint"].values)
    present = sorted({names[j] for j in limiting[ok]})
    assert sorted(art.zones) == present
    for name, zone in art.zones.items():
        assert len(zone.get_paths()) == int(np.sum(ok & (limiting == names.index(name))))
    legend_texts = [t.get_text() for t in art.legend.get_texts()]
    assert all(f"{n} limits" in legend_texts for n in present)
    # the safety caution of the map is on the figure
    shown = " ".join(art.caution.get_text().split())
    assert shown == " ".join(planar_map.attrs["caution"].split())
    assert art.caution.figure is art.ax.figure


def test_headroom_map_needs_ratings(irp, planar):
    unrated = ir.planar_chain([0.4, 0.3], [1.2, 0.6], name="unrated")
    ds = ir.metric_map(unrated, _rectangle(unrated, (0.4, 0.0, 0.1), (0.08, 0.08), 0.04))
    with pytest.raises(ValueError, match="has no torque headroom"):
        irp.plot_headroom_map(ds)


# --------------------------------------------------------------------------
# trade-off
# --------------------------------------------------------------------------
def test_tradeoff_heatmap_and_best(irp, sweep):
    art = irp.plot_tradeoff(sweep, "headroom_worst")
    assert art.kind == "heatmap"
    res = sweep.results_
    expected = res["headroom_worst"].transpose("tool.payload_kg", "joints[1].link_length_m").values
    assert_allclose(np.ma.getdata(art.mesh.get_array()), expected)
    best, value = sweep.best("headroom_worst")
    # link length on screen in mm, payload in kg
    assert art.best.get_xdata()[0] == pytest.approx(1000.0 * best["joints[1].link_length_m"])
    assert art.best.get_ydata()[0] == pytest.approx(best["tool.payload_kg"])
    assert art.best_values["score"] == pytest.approx(value)
    assert art.ax.get_xlabel() == "joints[1] link length [mm]"
    assert art.ax.get_ylabel() == "tool payload [kg]"
    assert art.colorbar.ax.get_ylabel() == "worst torque headroom [-]"


def test_tradeoff_lines_per_second_parameter(irp, sweep):
    res = sweep.results_
    art = irp.plot_tradeoff(res, "mass_ratio_worst", x="joints[1].link_length_m")
    assert art.kind == "lines"
    payloads = res["tool.payload_kg"].values
    assert len(art.lines) == len(payloads)
    for line, i in zip(art.lines, range(len(payloads))):
        assert_allclose(line.get_xdata(), [250.0, 300.0, 350.0])
        assert_allclose(line.get_ydata(),
                        res["mass_ratio_worst"].isel({"tool.payload_kg": i}).values)
    best, value = sweep.best("mass_ratio_worst")
    assert art.best.get_ydata()[0] == pytest.approx(value)
    assert art.best.get_xdata()[0] == pytest.approx(1000.0 * best["joints[1].link_length_m"])


def test_tradeoff_minimising_score(irp, sweep):
    art = irp.plot_tradeoff(sweep, "moving_mass_kg", x="tool.payload_kg", maximize=False)
    best, value = sweep.best("moving_mass_kg", maximize=False)
    assert art.best_values["score"] == pytest.approx(value)
    assert art.best.get_xdata()[0] == pytest.approx(best["tool.payload_kg"])


def test_tradeoff_errors(irp, sweep):
    with pytest.raises(KeyError, match="No score named 'gcx'"):
        irp.plot_tradeoff(sweep, "gcx")
    with pytest.raises(ValueError, match="`x` = 'mount.rpy_deg\\[1\\]' is not a swept parameter"):
        irp.plot_tradeoff(sweep, "gci", x="mount.rpy_deg[1]")


# --------------------------------------------------------------------------
# MassEllipseDisplay
# --------------------------------------------------------------------------
def test_mass_ellipse_display_case_a_closed_form(irp):
    # Case A at q = (0, pi/2): link 2 points up (+z); Lambda = diag(1/3, 5/3) kg across
    # (x) and along (z) link 2 (references.md items 4 and 8 [D], from Khatib 1987 eq. 18).
    arm = case_a_arm()
    disp = irp.MassEllipseDisplay.from_arm(arm, [0.0, np.pi / 2])
    s = disp.scale
    assert disp.ellipse_.width == pytest.approx(2.0 * s / np.sqrt(1.0 / 3.0), rel=1e-9)
    assert disp.ellipse_.height == pytest.approx(2.0 * s / np.sqrt(5.0 / 3.0), rel=1e-9)
    assert _axis_angle_diff(disp.ellipse_.angle, 0.0) == pytest.approx(0.0, abs=1e-6)
    # arm: base (0, 0), elbow (1000, 0) mm, tool (1000, 800) mm in the x-z plane
    assert_allclose(disp.arm_line_.get_xydata(), [[0, 0], [1000, 0], [1000, 800]], atol=1e-9)
    assert_allclose(disp.ellipse_.center, (1000.0, 800.0), atol=1e-9)
    assert disp.ax_.figure is disp.figure_


def test_mass_ellipse_display_update_in_place(irp, planar):
    disp = irp.MassEllipseDisplay.from_arm(planar, [0.3, -1.2])
    ellipse, line, text = disp.ellipse_, disp.arm_line_, disp.text_
    calls = []
    disp.figure_.canvas.draw_idle = lambda: calls.append(1)
    q_new = np.array([1.1, 0.9])
    assert disp.update(q_new) is disp
    assert disp.ellipse_ is ellipse and disp.arm_line_ is line and disp.text_ is text
    assert calls == [1]
    pm = ir.principal_masses(planar, q_new)
    s = disp.scale
    assert ellipse.width == pytest.approx(2.0 * s / np.sqrt(pm.masses[0]), rel=1e-9)
    assert ellipse.height == pytest.approx(2.0 * s / np.sqrt(pm.masses[1]), rel=1e-9)
    d0 = pm.directions[:, 0]
    assert _axis_angle_diff(ellipse.angle, np.degrees(np.arctan2(d0[2], d0[0]))) == \
        pytest.approx(0.0, abs=1e-6)
    origins, _ = planar.link_frames(q_new)
    points = np.vstack([origins, planar.tool_position(q_new)])
    assert_allclose(line.get_xydata(), 1000.0 * points[:, [0, 2]], atol=1e-9)
    assert_allclose(ellipse.center, 1000.0 * points[-1, [0, 2]], atol=1e-9)
    assert f"{pm.masses[0]:.3g}" in text.get_text()


def test_mass_ellipse_display_spatial_default_plane(irp, kestrel):
    arm = kestrel[0][0]
    q = np.radians([20.0, 40.0, -70.0])
    disp = irp.MassEllipseDisplay.from_arm(arm, q)
    # default plane for a 3-D task: world x across, z up; shadow checked by mass_along
    for theta in np.radians([0.0, 45.0, 90.0, 120.0]):
        m_u = ir.mass_along(arm, q, [np.cos(theta), 0.0, np.sin(theta)])
        got = _support(disp.ellipse_.width, disp.ellipse_.height, disp.ellipse_.angle,
                       np.array([np.cos(theta), np.sin(theta)]))
        assert got == pytest.approx(disp.scale / np.sqrt(m_u), rel=1e-7)
    assert disp.ax_.get_xlabel() == "x [mm]" and disp.ax_.get_ylabel() == "height z [mm]"


def test_mass_ellipse_display_errors(irp, planar):
    with pytest.raises(ValueError, match=r"Expected `q` with shape \(2,\) for design "
                                         r"'plot_planar' \(one configuration\), got \(3,\)"):
        irp.MassEllipseDisplay.from_arm(planar, [0.1, 0.2, 0.3])
    with pytest.raises(ValueError, match="`plane_axes` must be 2 orthonormal rows"):
        irp.MassEllipseDisplay.from_arm(planar, [0.1, 0.2], plane_axes=[[1, 0, 0], [1, 0, 0]])
    disp = irp.MassEllipseDisplay(arm_xy_mm=np.zeros((3, 2)), width_mm=1.0, height_mm=1.0,
                                  angle_deg=0.0, masses_kg=np.ones(2),
                                  plane_axes=np.eye(3)[[0, 2]], scale=1.0)
    with pytest.raises(ValueError, match="needs a display made with MassEllipseDisplay.from_arm"):
        disp.update([0.0, 0.0])


# --------------------------------------------------------------------------
# TorqueBarsDisplay
# --------------------------------------------------------------------------
def test_torque_bars_case_a_closed_form(irp):
    # Case A at q = (0, 0), ratings (40, 10) N m peak: static torque (23.53596, 3.92266)
    # N m (Spong et al. 2006 ch. 7 [M], re-derived [D]; references.md item 1) and
    # utilisation (0.588399, 0.392266) (references.md item 4 [D]).
    arm = case_a_arm(peak_torque_Nm=[40.0, 10.0], continuous_torque_Nm=[30.0, 8.0])
    disp = irp.TorqueBarsDisplay.from_arm(arm, [0.0, 0.0], accel_mps2=0.0)
    assert_allclose([b.get_height() for b in disp.static_bars_], [23.53596, 3.92266], rtol=1e-6)
    assert_allclose([b.get_height() for b in disp.worst_bars_], [23.53596, 3.92266], rtol=1e-6)
    assert [t.get_text().splitlines()[0] for t in disp.labels_] == ["59% of peak",
                                                                   "39% of peak"]
    peak_y = sorted(seg[0][1] for seg in disp.peak_marks_.get_segments())
    cont_y = sorted(seg[0][1] for seg in disp.continuous_marks_.get_segments())
    assert peak_y == [10.0, 40.0] and cont_y == [8.0, 30.0]
    assert " ".join(disp.caution_.get_text().split()).startswith("CAUTION:")
    assert [t.get_text() for t in disp.ax_.get_xticklabels()] == ["joint1", "joint2"]
    assert disp.ax_.get_ylabel() == "joint torque [N·m]"


def test_torque_bars_acceleration_case_a(irp):
    # Case A at q = (0, pi/2): G = (19.6133, 0) N m (references.md item 1); J_t^T Lambda
    # has rows (-0.8/3, 5/3) and (-0.8/3, 0) (J from references.md conventions, Lambda =
    # diag(1/3, 5/3) from item 4 [D]), so with a = 3 m/s^2 the worst torques are
    # |G_j| + 3 * ||row_j|| (torque_headroom definition, brief / _api docstring).
    arm = case_a_arm(peak_torque_Nm=[40.0, 10.0])
    disp = irp.TorqueBarsDisplay.from_arm(arm, [0.0, np.pi / 2], accel_mps2=3.0)
    rows = np.array([np.hypot(0.8 / 3.0, 5.0 / 3.0), 0.8 / 3.0])
    assert_allclose([b.get_height() for b in disp.static_bars_], [2.0 * G_N, 0.0], atol=1e-9)
    assert_allclose([b.get_height() for b in disp.worst_bars_],
                    [2.0 * G_N + 3.0 * rows[0], 3.0 * rows[1]], rtol=1e-9, atol=1e-12)


def test_torque_bars_update_in_place(irp, kestrel):
    arm = kestrel[0][0]
    q0, q1 = np.radians([10.0, 30.0, -60.0]), np.radians([-40.0, 80.0, -20.0])
    disp = irp.TorqueBarsDisplay.from_arm(arm, q0, accel_mps2=2.0)
    static = list(disp.static_bars_)
    worst = list(disp.worst_bars_)
    labels = list(disp.labels_)
    calls = []
    disp.figure_.canvas.draw_idle = lambda: calls.append(1)
    assert disp.update(q1) is disp
    assert list(disp.static_bars_) == static and list(disp.worst_bars_) == worst
    assert all(a is b for a, b in zip(disp.labels_, labels))
    assert calls == [1]
    head = ir.torque_headroom(arm, q1, 2.0)
    assert_allclose([b.get_height() for b in static], head.static_torque_Nm, rtol=1e-12)
    assert_allclose([b.get_height() for b in worst], head.worst_torque_Nm, rtol=1e-12)
    assert [t.get_text().splitlines()[0] for t in labels] == \
        [f"{u:.0%} of peak" for u in head.utilisation]
    assert "q = (-40.0, 80.0, -20.0) deg" in disp.ax_.get_title()


def test_torque_bars_unrated(irp):
    unrated = ir.planar_chain([0.4, 0.3], [1.2, 0.6], name="unrated")
    with pytest.raises(ValueError, match="no joint with a peak_torque_Nm rating"):
        irp.TorqueBarsDisplay.from_arm(unrated, [0.0, 0.0])
    partly = ir.planar_chain([0.4, 0.3], [1.2, 0.6], peak_torque_Nm=[20.0, 5.0], name="partly")
    spec = partly.to_dict()
    del spec["joints"][1]["actuator"]
    arm = ir.Arm.from_dict(spec)
    disp = irp.TorqueBarsDisplay.from_arm(arm, [0.2, 0.4])
    assert disp.labels_[1].get_text() == "not rated"
    assert len(disp.peak_marks_.get_segments()) == 1


# --------------------------------------------------------------------------
# geometry of an oblique plane, and readability of new figures
# --------------------------------------------------------------------------
def test_oblique_plane_arm_and_grid_agree(irp):
    # Base turned 30 deg about world z: the task plane's first axis is oblique. The
    # arm's tool end (via arm.link_frames / tool_position) must land on the centre of
    # the probed cell (via the region's centre and axes): two independent routes.
    arm = _planar_arm(base_yaw_deg=30.0, name="yawed")
    c, s = np.cos(np.radians(30.0)), np.sin(np.radians(30.0))
    ds = ir.metric_map(arm, _rectangle(arm, (0.35 * c, 0.35 * s, 0.1), (0.3, 0.2), 0.04))
    assert _ok(ds)[3, 2], "test precondition: the probed point is solved"
    art = irp.plot_metric_map(ds, "isotropy", arm=arm, probe=(2, 3))
    edges = art.mesh.get_coordinates()
    centre = 0.25 * (edges[3, 2] + edges[3, 3] + edges[4, 2] + edges[4, 3])
    tool_end = art.arm_line.get_xydata()[-1]
    assert_allclose(tool_end, centre, atol=1e-6)
    # the region's axes are the task axes; one is world z, the other oblique
    labels = {art.ax.get_xlabel(), art.ax.get_ylabel()}
    oblique = np.round([a for a in arm.task_axes if abs(a[2]) < 0.5][0], 2) + 0.0
    assert "height z [mm]" in labels
    assert any(t.endswith(f"[mm] along ({oblique[0]:.2f}, {oblique[1]:.2f}, {oblique[2]:.2f})")
               for t in labels)


def _text_boxes(fig, artists):
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    boxes = {}
    for name, artist in artists.items():
        if artist is not None and (not hasattr(artist, "get_text") or artist.get_text()):
            boxes[name] = artist.get_window_extent(renderer)
    return boxes


def _assert_readable(fig, artists):
    """Texts inside the figure and not overlapping each other (1 px tolerance)."""
    boxes = _text_boxes(fig, artists)
    frame = fig.bbox
    for name, b in boxes.items():
        assert b.x0 >= frame.x0 - 1 and b.x1 <= frame.x1 + 1, f"{name} sticks out sideways"
        assert b.y0 >= frame.y0 - 1 and b.y1 <= frame.y1 + 1, f"{name} sticks out vertically"
    names = list(boxes)
    for i, a in enumerate(names):
        for b in names[i + 1:]:
            box_a, box_b = boxes[a], boxes[b]
            overlap_x = min(box_a.x1, box_b.x1) - max(box_a.x0, box_b.x0)
            overlap_y = min(box_a.y1, box_b.y1) - max(box_a.y0, box_b.y0)
            assert overlap_x <= 1 or overlap_y <= 1, f"{a} overlaps {b}"


def test_new_figures_have_no_overlapping_text(irp, planar, planar_map, kestrel):
    head = irp.plot_headroom_map(planar_map)
    ax = head.ax
    _assert_readable(ax.figure, {"title": ax.title, "xlabel": ax.xaxis.label,
                                 "ylabel": ax.yaxis.label,
                                 "cbar": head.colorbar.ax.yaxis.label, "legend": head.legend,
                                 "caution": head.caution})
    bars = irp.TorqueBarsDisplay.from_arm(kestrel[0][0], np.radians([10, 30, -60]), 2.0)
    ax = bars.ax_
    _assert_readable(ax.figure, {"title": ax.title, "xlabel": ax.xaxis.label,
                                 "ylabel": ax.yaxis.label, "legend": ax.figure.axes[1].get_legend(),
                                 "caution": bars.caution_})
    art = irp.plot_metric_map(planar_map, "mass_ratio", arm=planar, probe=(8, 6))
    ax = art.ax
    _assert_readable(ax.figure, {"title": ax.title, "xlabel": ax.xaxis.label,
                                 "ylabel": ax.yaxis.label,
                                 "cbar": art.colorbar.ax.yaxis.label, "legend": art.legend})


# --------------------------------------------------------------------------
# screens a review meeting looks at
# --------------------------------------------------------------------------
def _overlaps(box_a, box_b, tol=1.0):
    return (min(box_a.x1, box_b.x1) - max(box_a.x0, box_b.x0) > tol and
            min(box_a.y1, box_b.y1) - max(box_a.y0, box_b.y0) > tol)


@pytest.mark.parametrize("where", ["own", "axes", "figure"])
def test_torque_bar_labels_clear_of_the_legend(plt, irp, kestrel, where):
    # every per-joint label ("18% of peak ...") stays readable: its box overlaps neither
    # the legend nor the caution, in a new figure, in a given Axes and in a given figure
    from inertia_review.widgets._render import new_figure

    arm = kestrel[0][0]
    q = np.radians([7.5, 45.0, -108.1])
    if where == "own":
        bars = irp.TorqueBarsDisplay.from_arm(arm, q, 2.0)
    elif where == "axes":
        fig, ax = plt.subplots(figsize=(8.0, 4.0), layout="constrained")
        bars = irp.TorqueBarsDisplay.from_arm(arm, q, 2.0, ax=ax)
    else:
        fig = new_figure(6.0, 4.2, layout=None)            # as the widget's probe does
        bars = irp.TorqueBarsDisplay.from_arm(arm, q, 2.0, figure=fig)
        assert bars.figure_ is fig and plt.get_fignums() == []
    fig = bars.figure_
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    legend = bars.legend_.get_window_extent(renderer)
    caution = bars.caution_.get_window_extent(renderer)
    assert len(bars.labels_) == 3
    for label in bars.labels_:
        box = label.get_window_extent(renderer)
        assert not _overlaps(box, legend), f"label {label.get_text()!r} under the legend"
        assert not _overlaps(box, caution), f"label {label.get_text()!r} under the caution"
        assert fig.bbox.x0 - 1 <= box.x0 and box.x1 <= fig.bbox.x1 + 1
    frame = fig.bbox
    assert caution.y0 >= frame.y0 - 1 and caution.x1 <= frame.x1 + 1, "caution cut off"


def test_mass_ellipse_view_fits_the_reach_and_the_region(plt, irp, kestrel):
    # the view holds the arm, the ellipse and the task region, and is not much larger
    # than the arm's reach at q (the old fixed view was about 2.3 reaches per side)
    arm = kestrel[0][0]
    q = np.radians([7.5, 45.0, -108.1])
    disp = irp.MassEllipseDisplay.from_arm(arm, q)
    origins, _ = arm.link_frames(q)
    points = 1000.0 * np.vstack([origins, arm.tool_position(q)])[:, [0, 2]]
    reach = float(np.sum(np.linalg.norm(np.diff(points, axis=0), axis=1)))
    (x0, x1), (y0, y1) = disp.ax_.get_xlim(), disp.ax_.get_ylim()
    assert max(x1 - x0, y1 - y0) <= 1.3 * reach
    region = arm.task.region                   # world x-z rectangle of the design's task
    cx, cz = 1000.0 * region.center_m[0], 1000.0 * region.center_m[2]
    su, sv = 500.0 * np.asarray(region.size_m)
    corners = np.array([[cx - su, cz - sv], [cx + su, cz + sv]])
    inside = np.vstack([points, corners])
    assert np.all(inside[:, 0] >= x0) and np.all(inside[:, 0] <= x1)
    assert np.all(inside[:, 1] >= y0) and np.all(inside[:, 1] <= y1)
    assert_allclose(np.sort(disp.region_.get_xdata()[:-1]), np.sort(
        [cx - su, cx + su, cx + su, cx - su]), atol=1e-6)
    half = 0.5 * max(disp.width_mm, disp.height_mm)
    c = disp.ellipse_.center
    assert x0 <= c[0] - half and c[0] + half <= x1 and y0 <= c[1] - half and c[1] + half <= y1
    # an update widens the view if needed and never narrows it
    limits = (x0, x1, y0, y1)
    disp.update(np.radians([0.0, 10.0, -20.0]))
    (a0, a1), (b0, b1) = disp.ax_.get_xlim(), disp.ax_.get_ylim()
    assert a0 <= limits[0] and a1 >= limits[1] and b0 <= limits[2] and b1 >= limits[3]
    tip = disp.arm_line_.get_xydata()[-1]
    assert a0 <= tip[0] <= a1 and b0 <= tip[1] <= b1
    # without a region, the view fits the arm and the ellipse alone
    bare = irp.MassEllipseDisplay.from_arm(arm, q, region=None)
    assert bare.region_ is None
    with pytest.raises(ValueError, match="`region`"):
        irp.MassEllipseDisplay.from_arm(arm, q, region="elsewhere")


@pytest.mark.parametrize("ncols", [None, 2])
def test_small_multiples_every_panel_keeps_its_x_ticks_and_label(plt, irp, kestrel, ncols):
    _, maps = kestrel
    art = irp.plot_small_multiples(maps, "min_margin", ncols=ncols)
    fig = art.figure
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    for i, ax in enumerate(art.axes):
        shown = [t for t in ax.get_xticklabels() if t.get_visible() and t.get_text()]
        assert len(shown) >= 2, f"panel {i} lost its x tick labels"
        assert ax.get_xlabel() == "x [mm]" and ax.xaxis.label.get_visible()
        label_box = ax.xaxis.label.get_window_extent(renderer)
        assert label_box.y0 >= fig.bbox.y0 - 1, f"panel {i}: x label cut off"
        # the y axis is shared along a row: labelled on the first panel of the row
        first = i % (ncols or len(maps)) == 0
        assert (ax.get_ylabel() == "height z [mm]") is first


def test_a_long_title_is_wrapped_inside_the_figure():
    """A long design name (e.g. a search proposal) must not push the title past the image
    edge: every title line lies within the figure after drawing (common practice, no source)."""
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    import inertia_review as ir
    import inertia_review.plots as irp

    spec = ir.demo_design("kestrel_a").to_dict()
    spec["name"] = "kestrel_a proposal 263 from the second review round of the polishing cell"
    arm = ir.Arm.from_dict(spec)
    bars = irp.TorqueBarsDisplay.from_arm(arm, [0.1, 0.8, -1.9], accel_mps2=2.0)
    fig = bars.figure_
    fig.canvas.draw()
    title = bars.ax_.title
    box = title.get_window_extent(fig.canvas.get_renderer())
    assert title.get_text().count("\n") >= 2                     # name wrapped, q line kept
    assert box.x0 >= 0.0 and box.x1 <= fig.bbox.width + 0.5
    plt.close("all")
