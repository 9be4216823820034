"""Tube links, material densities and standard gravity (references.md item 7).

Sources (status from references.md):
- Machinery's Handbook, 31st ed., Industrial Press 2020, pp. 236-237
  "Radius of Gyration" [C]: hollow cylinder, longitudinal axis
  k^2 = (R^2 + r^2)/2; about a diameter at mid-length
  k^2 = (R^2 + r^2)/4 + L^2/12; thin hollow cylinder k^2 = r^2/2 + L^2/12.
  End-axis values by the parallel-axis theorem [D].
- Densities [C]: aluminium 6061 2700 kg/m^3 (Aluminum Association typical
  values as quoted in supplier data sheets; Gere, Mechanics of Materials,
  5th ed.); structural steel 7850 kg/m^3 (EN 1993-1-1:2005 3.2.6; Gere);
  carbon fibre / epoxy, Vf = 0.60, 1.7 g/cm^3 (Callister & Rethwisch,
  Fundamentals of Materials Science and Engineering, 3rd ed., Wiley 2008,
  App. B, Table B.1).
- Standard gravity g_n = 9.80665 m/s^2, exact: 3rd CGPM (1901), Comptes
  Rendus p. 70 [C] (ISO 80000-3 restates it).
- Check case values: references.md item 7 [D] (computed there, not a
  published numeric case).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import inertia_review as ir

G_N = 9.80665  # 3rd CGPM (1901) [C]

# references.md item 7 check case: 6061 tube, L = 0.5 m, OD 60 mm, wall 3 mm
L, OD, WALL = 0.5, 0.060, 0.003
R, r = OD / 2, OD / 2 - WALL

FAST = settings(max_examples=30, deadline=None)


def handbook_tube(length, outer_d, wall, rho):
    """Machinery's Handbook 31st ed. pp. 236-237 [C] formulas, with numpy.

    Returns mass, axial inertia and transverse inertia about the centre.
    """
    Ro, ri = outer_d / 2, outer_d / 2 - wall
    m = rho * np.pi * (Ro**2 - ri**2) * length
    return m, m * (Ro**2 + ri**2) / 2, m * ((Ro**2 + ri**2) / 4 + length**2 / 12)


# --------------------------------------------------------------------------
# material table and standard gravity
# --------------------------------------------------------------------------
@pytest.mark.parametrize("name, rho", [
    ("aluminium_6061", 2700.0),   # AA typical values; Gere 5th ed. [C]
    ("structural_steel", 7850.0),  # EN 1993-1-1:2005 3.2.6; Gere [C]
    ("cfrp", 1700.0),             # Callister & Rethwisch 2008 Table B.1 [C]
])
def test_material_densities(name, rho):
    assert ir.MATERIALS[name] == rho


def test_default_gravity_is_standard_gravity():
    # arm-model.md default; g_n = 9.80665 m/s^2 exactly, 3rd CGPM (1901) [C].
    assert ir.STANDARD_GRAVITY == 9.80665
    arm = ir.Arm.from_dict(single_tube_design({"material": "aluminium_6061"}))
    np.testing.assert_array_equal(np.asarray(arm.gravity), [0.0, 0.0, -9.80665])
    # and a design that overrides it keeps the override (arm-model.md)
    d = single_tube_design({"material": "aluminium_6061"})
    d["mount"]["gravity_mps2"] = [0.0, 0.0, -9.81]
    np.testing.assert_array_equal(np.asarray(ir.Arm.from_dict(d).gravity),
                                  [0.0, 0.0, -9.81])


# --------------------------------------------------------------------------
# ir.tube_properties against the handbook (check case of item 7)
# --------------------------------------------------------------------------
def test_tube_6061_check_case():
    # references.md item 7 check case [D] from Machinery's Handbook 31st ed.
    # pp. 236-237 [C] and the AA 6061 density 2700 kg/m^3 [C].
    t = ir.tube_properties(L, OD, WALL, 2700.0)
    assert t.mass_kg == pytest.approx(0.72523666, rel=1e-8)
    np.testing.assert_allclose(t.com_m, [L / 2, 0.0, 0.0], rtol=1e-15, atol=0)
    Ixx, Iyy, Izz, Ixy, Ixz, Iyz = t.inertia_kgm2
    assert Ixx == pytest.approx(5.907053e-4, rel=1e-6)           # axial
    assert Iyy == pytest.approx(0.0154044498, rel=1e-9)          # centre
    assert Izz == pytest.approx(0.0154044498, rel=1e-9)
    assert (Ixy, Ixz, Iyz) == (0.0, 0.0, 0.0)
    # end axis by the parallel-axis theorem [D]: I_end = I_centre + m (L/2)^2
    assert Iyy + t.mass_kg * (L / 2) ** 2 == pytest.approx(0.0607317413,
                                                           rel=1e-9)


def test_tube_thick_versus_thin_wall():
    # references.md item 7 [D]: with r_m = (R + r)/2 and t = R - r the thin
    # wall formula (Machinery's Handbook "thin hollow cylinder", k^2 =
    # r_m^2/2 + L^2/12 [C]) is low by m t^2/8 (transverse) and m t^2/4
    # (axial): the core must use the thick-wall (exact) formula.
    tp = ir.tube_properties(L, OD, WALL, 2700.0)
    m = tp.mass_kg
    rm, t = (R + r) / 2, R - r
    thin_transverse = m * (rm**2 / 2 + L**2 / 12)
    thin_axial = m * rm**2
    assert thin_transverse == pytest.approx(0.0154036339, rel=1e-9)
    assert thin_axial == pytest.approx(5.890735e-4, rel=1e-6)
    Ixx, Iyy = tp.inertia_kgm2[0], tp.inertia_kgm2[1]
    assert Iyy - thin_transverse == pytest.approx(m * t**2 / 8, rel=1e-9)   # exact identity
    assert Iyy - thin_transverse == pytest.approx(8.159e-7, rel=1e-3)
    assert Ixx - thin_axial == pytest.approx(m * t**2 / 4, rel=1e-9)   # exact identity
    assert Ixx - thin_axial == pytest.approx(1.632e-6, rel=1e-3)


@pytest.mark.parametrize("material, mass, i_end", [
    ("structural_steel", 2.108558449, 0.1765719145),
    ("cfrp", 0.4566304922, 0.0382385038),
    ("aluminium_6061", 0.72523666, 0.0607317413),
])
def test_tube_other_materials(material, mass, i_end):
    # references.md item 7 table "same geometry in other materials" [D],
    # densities from ir.MATERIALS (checked against their sources above).
    t = ir.tube_properties(L, OD, WALL, ir.MATERIALS[material])
    assert t.mass_kg == pytest.approx(mass, rel=1e-8)
    assert t.inertia_kgm2[1] + t.mass_kg * (L / 2) ** 2 == pytest.approx(
        i_end, rel=1e-8)


@FAST
@given(length=st.floats(0.05, 2.0), outer_d=st.floats(0.01, 0.3),
       wall_frac=st.floats(0.02, 0.5), rho=st.floats(500.0, 9000.0))
def test_tube_properties_handbook_formulas(length, outer_d, wall_frac, rho):
    # Machinery's Handbook 31st ed. pp. 236-237 [C], random geometries:
    # mass, axial and transverse (mid-length diameter) inertias, COM at L/2.
    wall = wall_frac * outer_d / 2
    t = ir.tube_properties(length, outer_d, wall, rho)
    m, I_ax, I_tr = handbook_tube(length, outer_d, wall, rho)
    assert t.mass_kg == pytest.approx(m, rel=1e-12)
    np.testing.assert_allclose(t.com_m, [length / 2, 0.0, 0.0], rtol=1e-14)
    np.testing.assert_allclose(t.inertia_kgm2, [I_ax, I_tr, I_tr, 0, 0, 0],
                               rtol=1e-12, atol=0)


# --------------------------------------------------------------------------
# a tube link in a design file
# --------------------------------------------------------------------------
def single_tube_design(tube_extra):
    """One joint turning about world -y, the tube along +x: q > 0 raises it.

    The tool point sits at the tube's centre (L/2), so the tube's potential
    energy is m g z_tool.
    """
    tube = {"length_m": L, "outer_diameter_m": OD, "wall_m": WALL}
    tube.update(tube_extra)
    return {
        "name": "tube_check",
        "format": 1,
        "mount": {"xyz_m": [0.0, 0.0, 0.0], "rpy_deg": [0.0, 0.0, 0.0]},
        "joints": [{"name": "joint1", "xyz_m": [0.0, 0.0, 0.0],
                    "axis": [0.0, -1.0, 0.0], "link": {"tube": tube}}],
        "tool": {"xyz_m": [L / 2, 0.0, 0.0], "payload_kg": 0.0},
    }


def test_static_torque_of_tube_held_horizontal():
    # references.md item 7 [D]: m g_n L/2 = 1.778035533 N m about the end.
    arm = ir.Arm.from_dict(single_tube_design({"material": "aluminium_6061"}))
    assert arm.gravity_torque(np.array([0.0])) == pytest.approx(
        [1.778035533], rel=1e-9)
    # held vertical: no gravity torque; at 60 deg: cos 60 = 1/2 of it
    assert arm.gravity_torque(np.array([np.pi / 2])) == pytest.approx(
        [0.0], abs=1e-12)
    assert arm.gravity_torque(np.array([np.pi / 3])) == pytest.approx(
        [1.778035533 / 2], rel=1e-9)


def test_tube_gravity_torque_is_gradient_of_potential():
    # G = dV/dq with V = m g_n z_com (Lagrange; Spong 2006 ch. 7 [M]),
    # z_com read from tool_position (tool at the tube's centre); central
    # differences, h = 1e-6.
    arm = ir.Arm.from_dict(single_tube_design({"material": "aluminium_6061"}))
    m = handbook_tube(L, OD, WALL, 2700.0)[0]
    q = np.linspace(-3.0, 3.0, 13)[:, None]
    h = 1e-6
    V = lambda qq: m * G_N * arm.tool_position(qq)[..., 2]  # noqa: E731
    dV = (V(q + h) - V(q - h)) / (2 * h)
    np.testing.assert_allclose(arm.gravity_torque(q)[:, 0], dV, rtol=1e-6,
                               atol=1e-8)


def test_tube_by_material_or_density_is_the_same_link():
    # "material" resolves through ir.MATERIALS; density_kgm3 = 2700 must give
    # the same arm (AA 6061 density [C]).
    a = ir.Arm.from_dict(single_tube_design({"material": "aluminium_6061"}))
    b = ir.Arm.from_dict(single_tube_design({"density_kgm3": 2700.0}))
    q = np.linspace(-2.0, 2.0, 5)[:, None]
    np.testing.assert_array_equal(a.mass_matrix(q), b.mass_matrix(q))
    np.testing.assert_array_equal(a.gravity_torque(q), b.gravity_torque(q))
    # single joint about the tube's end: M = I_end (Machinery's Handbook +
    # parallel axis [D]) = 0.0607317413 kg m^2
    np.testing.assert_allclose(a.mass_matrix(q), 0.0607317413, rtol=1e-9)


def spatial_arm_design(link2):
    """Two non-parallel joints so that every tube inertia entry matters."""
    return {
        "name": "tube_vs_explicit",
        "format": 1,
        "mount": {"xyz_m": [0.1, -0.2, 0.3], "rpy_deg": [0.0, 10.0, 20.0]},
        "joints": [
            {"name": "yaw", "xyz_m": [0.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 1.5, "com_m": [0.1, 0.0, 0.05],
                      "inertia_kgm2": [0.004, 0.005, 0.003, 0.0, 0.0, 0.0]}},
            {"name": "pitch", "xyz_m": [0.2, 0.0, 0.1],
             "rpy_deg": [30.0, 0.0, 15.0], "axis": [0.0, 1.0, 0.0],
             "link": link2},
        ],
        "tool": {"xyz_m": [L, 0.0, 0.0], "payload_kg": 0.3},
    }


@pytest.mark.parametrize("tube_extra, rho", [
    ({"material": "aluminium_6061"}, 2700.0),
    ({"material": "structural_steel"}, 7850.0),
    ({"material": "cfrp"}, 1700.0),
    ({"density_kgm3": 4430.0}, 4430.0),  # an invented density
])
def test_tube_link_equals_explicit_link(tube_extra, rho):
    # A [joints.link] tube gives the same M(q) and G(q) as the explicit
    # mass / com / inertia computed here from Machinery's Handbook 31st ed.
    # pp. 236-237 [C] (tube along +x of the link frame from its origin).
    tube = {"length_m": L, "outer_diameter_m": OD, "wall_m": WALL}
    tube.update(tube_extra)
    m, I_ax, I_tr = handbook_tube(L, OD, WALL, rho)
    explicit = {"mass_kg": m, "com_m": [L / 2, 0.0, 0.0],
                "inertia_kgm2": [I_ax, I_tr, I_tr, 0.0, 0.0, 0.0]}
    a = ir.Arm.from_dict(spatial_arm_design({"tube": tube}))
    b = ir.Arm.from_dict(spatial_arm_design(explicit))
    assert a.dof == 2
    q = np.random.default_rng(31).uniform(-np.pi, np.pi, size=(3, 4, 2))
    np.testing.assert_allclose(a.mass_matrix(q), b.mass_matrix(q), rtol=1e-12,
                               atol=1e-15)
    np.testing.assert_allclose(a.gravity_torque(q), b.gravity_torque(q),
                               rtol=1e-12, atol=1e-13)
