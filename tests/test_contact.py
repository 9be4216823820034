"""Permissible transient-contact speeds (``inertia_review.studies._contact_model`` and ``_contact_maps``).

What is checked, and against what (statuses as in references.md):
- the shipped body-region table equals the ISO/TS 15066:2016 Annex A values of Tables A.2
  and A.3 as given in references.md item 6 ([S] two independent secondary sources, agree
  with memory [M]); every region carries a source and a status note, and the file carries
  the "informative, expected to change, check the current edition" note;
- mu, E_max and v_max of every region with M = 20 kg, m_L = 2 kg (m_R = 12 kg), and the
  hand-speed curve over m_R, against the [D] check values of references.md item 6
  (computed there independently; rtol 1e-6); the m_R -> inf limit 280 / sqrt(0.6 * 75000)
  is written out here by hand from the model (ISO/TS 15066 Annex A clause A.3, [S]);
- the energy identity 1/2 mu v^2 = F^2 / (2k) and the monotonic decrease of v with m_R,
  properties of the Annex A model (hypothesis);
- skull/forehead and face: transient contact not permitted (Annex A, [S]) -> speed 0 with a
  reason, never NaN;
- Case B (point masses, references.md): M/2 = 1.5 kg gives 1.561765 m/s, the apparent mass
  along link 2 at q = (pi/4, pi/6) is 9 kg and gives 1.363221 m/s ([D], references.md item
  6), so the simplified mass is non-conservative there; the map's effective mass equals the
  closed form Lambda = m2 I + (m1 / sin^2 q2) u12 u12^T (references.md item 8, oracle 1 [D],
  a consequence of Khatib 1987 eq. 18) at the map's own q;
- the map equals ``ir.permissible_speed`` at the map's own q (two code paths: the map reuses
  ``metric_map``'s batched mass along the approach); check_speeds agrees with
  permissible_speed sample by sample;
- every result shows the full caution text (references.md item 9 wording).
"""

import math
import textwrap

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import inertia_review as ir
from inertia_review.studies._cautions import CONTACT_CAUTION

# ISO/TS 15066:2016 Annex A, Table A.2 (F_QS) and Table A.3 (K, m_H), as given in
# references.md item 6 ([S] secondary sources, agree with memory [M]).
# key: (m_H [kg], K [N/mm], F_QS [N], F_T [N] or None = not permitted)
ANNEX_A = {
    "skull_forehead": (4.4, 150.0, 130.0, None),
    "face": (4.4, 75.0, 65.0, None),
    "neck": (1.2, 50.0, 150.0, 300.0),
    "back_shoulders": (40.0, 35.0, 210.0, 420.0),
    "chest": (40.0, 25.0, 140.0, 280.0),
    "abdomen": (40.0, 10.0, 110.0, 220.0),
    "pelvis": (40.0, 25.0, 180.0, 360.0),
    "upper_arm": (3.0, 30.0, 150.0, 300.0),
    "lower_arm": (2.0, 40.0, 160.0, 320.0),
    "hand": (0.6, 75.0, 140.0, 280.0),
    "thigh": (75.0, 50.0, 220.0, 440.0),
    "lower_leg": (75.0, 60.0, 130.0, 260.0),
}

# references.md item 6, check cases [D], M = 20 kg, m_L = 2 kg: (mu [kg], E_max [J], v_max [m/s])
CHECK_12KG = {
    "hand": (0.5714286, 0.5226667, 1.352528496),
    "lower_arm": (1.7142857, 1.28, 1.222020),
    "upper_arm": (2.4, 1.5, 1.118034),
    "neck": (1.0909091, 0.9, 1.284523),
    "back_shoulders": (9.2307692, 2.52, 0.738918),
    "chest": (9.2307692, 1.568, 0.582866),
    "abdomen": (9.2307692, 2.42, 0.724109),
    "pelvis": (9.2307692, 2.592, 0.749400),
    "thigh": (10.344828, 1.936, 0.611795),
    "lower_leg": (10.344828, 0.5633333, 0.330017),
}

# A contact area at which the force route governs for every region of the shipped table:
# the largest crossover area F_T / p_T is 420 / 320 = 1.31 cm^2 (back and shoulders), so at
# 10 cm^2 the pressure route gives a higher speed everywhere and the force-route check values
# of references.md item 6 apply unchanged.
A_FORCE = 10.0

# references.md item 9 (suggested wording) and the brief: what every caution must say
CAUTION_PHRASES = ("design-stage estimate", "not a validation", "finished application",
                   "ISO 12100", "ISO 10218-2", "licensed practice", "Local regulations")


def case_b():
    """references.md Case B: m1 = 2 kg at the elbow, m2 = 1 kg at the tip, l1 = 1, l2 = 0.8,
    massless rods; joint axes along world z (a horizontal plane, so gravity plays no part)."""
    zero = [0.0] * 6
    return ir.Arm.from_dict({
        "format": 1, "name": "case_b",
        "joints": [
            {"axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 0.0, "com_m": [0.0, 0.0, 0.0], "inertia_kgm2": zero,
                      "point_masses": [{"mass_kg": 2.0, "xyz_m": [1.0, 0.0, 0.0]}]}},
            {"xyz_m": [1.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 1.0, "com_m": [0.8, 0.0, 0.0], "inertia_kgm2": zero}},
        ],
        "tool": {"xyz_m": [0.8, 0.0, 0.0]},
    })


@pytest.fixture(scope="module")
def arm_b():
    return case_b()


def link2_direction(q):
    th = q[..., 0] + q[..., 1]
    return np.stack([np.cos(th), np.sin(th), np.zeros_like(th)], axis=-1)


def closed_form_mass_along(q, u, m1=2.0, m2=1.0):
    """1 / (u^T Lambda^-1 u), Lambda = m2 I + (m1 / sin^2 q2) u12 u12^T in the plane
    (references.md item 8, oracle 1 [D]); u12 = direction of link 2."""
    u12 = link2_direction(q)[..., :2]
    a = m1 / np.sin(q[..., 1]) ** 2
    lam = m2 * np.eye(2) + a[..., None, None] * u12[..., :, None] * u12[..., None, :]
    uu = np.asarray(u)[..., :2]
    return 1.0 / np.einsum("...i,...ij,...j->...", uu, np.linalg.inv(lam), uu)


def assert_caution(text):
    for phrase in CAUTION_PHRASES:
        assert phrase in text, phrase


# ------------------------------------------------------------------------- body-region table
def test_shipped_table_matches_annex_a():
    # ISO/TS 15066:2016 Annex A Tables A.2/A.3 via references.md item 6 [S]/[M]
    table = ir.load_body_regions()
    assert set(table) == set(ANNEX_A)
    for key, (m_h, k, f_qs, f_t) in ANNEX_A.items():
        r = table[key]
        assert (r.effective_mass_kg, r.spring_constant_Npmm, r.quasi_static_force_N) == (m_h, k, f_qs)
        assert r.transient_force_N == f_t
        assert r.transient_permitted == (f_t is not None)
        if f_t is not None:      # F_T = 2 F_QS (Table A.2 multiplier 2, [S])
            assert r.transient_force_N == 2.0 * r.quasi_static_force_N


def test_every_value_has_a_source_note():
    # brief: every value in the body-region file has a source note and a status
    import tomllib
    from importlib import resources
    raw = tomllib.loads(resources.files("inertia_review").joinpath("data", "body_regions.toml")
                        .read_text(encoding="utf-8"))
    assert raw["regions"]
    for key, entry in raw["regions"].items():
        assert "ISO/TS 15066:2016" in entry["source"], key
        assert "[S]" in entry["status"] and "[M]" in entry["status"], key
        assert "licensed copy" in entry["status"], key
        assert entry["areas"], key
        for area_key, area in entry["areas"].items():
            assert "ISO/TS 15066:2016" in area["source"] and "Table A.2" in area["source"], area_key
            assert "[S]" in area["status"] and "licensed copy" in area["status"], area_key
    note = raw["note"]
    for phrase in ("INFORMATIVE", "expected to change", "ISO 10218-2:2025", "current edition",
                   "not permitted", "body-area pressures", "clamping"):
        assert phrase in note, phrase
    table = ir.load_body_regions()
    assert table.note == note
    assert_caution(table.text())


def test_user_table_is_read_and_used(tmp_path):
    path = tmp_path / "mine.toml"
    path.write_text(textwrap.dedent("""\
        format = 1
        note = "invented demo values, not from any standard"
        source = "invented for this test"
        [regions.paw]
        name = "Paw"
        effective_mass_kg = 1.0
        spring_constant_Npmm = 100.0
        quasi_static_force_N = 50.0
        transient_force_N = 100.0
        source = "invented"
        status = "invented"
        [regions.paw.areas.pad]
        name = "Pad"
        quasi_static_pressure_Npcm2 = 20.0
        transient_pressure_Npcm2 = 40.0
        source = "invented"
        status = "invented"
        """))
    table = ir.load_body_regions(path)
    assert list(table) == ["paw"]
    # v = F / sqrt(mu k), mu = (1/1 + 1/1)^-1 = 0.5, k = 1e5 N/m -> 100 / sqrt(5e4) (by hand)
    r = ir.contact_speed("paw", 1.0, regions=path, contact_area_cm2=A_FORCE)
    assert r.speed_mps == pytest.approx(100.0 / math.sqrt(5.0e4), rel=1e-12)
    with pytest.raises(ValueError, match=r"'hand' is not a body region of .*mine.toml; "
                                         r"available regions: paw"):
        ir.contact_speed("hand", 1.0, regions=table, contact_area_cm2=A_FORCE)


def test_user_table_errors_name_every_field(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text(textwrap.dedent("""\
        format = 2
        source = "x"
        [regions.hand]
        name = "Hands"
        effective_mass_kg = 0.6
        spring_constant_Npmm = -75.0
        quasi_static_force_N = true
        transient_force_N = "forbidden"
        source = ""
        stauts = "typo"
        [regions.hand.areas.palm]
        name = "Palm"
        quasi_static_pressure_Npcm2 = 260.0
        transient_pressure_Npcm2 = 100.0
        source = "x"
        status = "x"
        [regions.hand.areas.pad]
        name = "Pad"
        quasi_static_pressure_Npcm2 = 1e300
        transient_pressure_Npcm2 = "none"
        source = "x"
        status = "x"
        [regions.foot]
        name = "Foot"
        effective_mass_kg = 1e-320
        spring_constant_Npmm = 75.0
        quasi_static_force_N = 100.0
        transient_force_N = 200.0
        source = "x"
        status = "x"
        """))
    with pytest.raises(ir.DesignError) as info:
        ir.load_body_regions(path)
    paths = [p for p, _ in info.value.problems]
    assert paths == ["format", "note", "regions.hand.stauts", "regions.hand.spring_constant_Npmm",
                     "regions.hand.quasi_static_force_N", "regions.hand.transient_force_N",
                     "regions.hand.source", "regions.hand.status",
                     "regions.hand.areas.palm.transient_pressure_Npcm2",
                     "regions.hand.areas.pad.quasi_static_pressure_Npcm2",
                     "regions.hand.areas.pad.transient_pressure_Npcm2",
                     "regions.foot.effective_mass_kg", "regions.foot.areas"]
    msg = str(info.value)
    assert "design 'bad.toml' has 13 problems" in msg
    assert "regions.hand.spring_constant_Npmm: must be >= 0.001; got -75" in msg
    assert ("regions.hand.areas.palm.transient_pressure_Npcm2: must be >= the quasi-static "
            "pressure 260 N/cm^2; got 100") in msg
    assert "regions.hand.areas.pad.quasi_static_pressure_Npcm2: must be <= 100000; got 1e+300" in msg
    assert "regions.foot.effective_mass_kg: must be >= 0.001; got 9.99989e-321" in msg  # 1e-320, subnormal
    assert "regions.foot.areas: required table is missing" in msg
    assert "regions.hand.quasi_static_force_N: must be a number; got a boolean" in msg
    assert "regions.hand.transient_force_N: must be a number > 0 [N] or \"not permitted\"" in msg
    assert "regions.hand.stauts: unknown key; did you mean 'status'?" in msg
    assert "format: unsupported format 2; the supported format is 1" in msg
    assert "note: required key is missing" in msg


def test_not_toml_is_a_design_error(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text("regions = [\n")
    with pytest.raises(ir.DesignError, match=r"\(file\): not valid TOML"):
        ir.load_body_regions(path)


# ------------------------------------------------------------------------- the pure model
@pytest.mark.parametrize("key", sorted(CHECK_12KG))
def test_annex_a_check_values_at_12_kg(key):
    # references.md item 6 check cases [D]: M = 20 kg, m_L = 2 kg -> m_R = M/2 + m_L = 12 kg
    m_r = ir.simplified_effective_mass(20.0, 2.0)
    assert m_r == 12.0
    mu, energy, speed = CHECK_12KG[key]
    m_h, k, _, f_t = ANNEX_A[key]
    assert ir.reduced_mass(m_h, m_r) == pytest.approx(mu, rel=1e-6)
    assert ir.transient_energy_limit(f_t, k) == pytest.approx(energy, rel=1e-6)
    assert ir.transient_speed_limit(f_t, k, m_h, m_r) == pytest.approx(speed, rel=1e-6)
    r = ir.contact_speed(key, m_r, contact_area_cm2=A_FORCE)
    assert (r.reduced_mass_kg, r.energy_limit_J, r.speed_mps) == pytest.approx(
        (mu, energy, speed), rel=1e-6)


def test_hand_check_value_to_ten_digits():
    # references.md item 6 [D] gives the hand at m_R = 12 kg to 10 digits: 1.352528496 m/s.
    # By hand from Table A.2/A.3 (ISO/TS 15066:2016 Annex A [S]): m_H = 0.6 kg, K = 75 N/mm,
    # F_T = 280 N -> mu = 0.6 * 12 / 12.6 = 4/7 kg, E = 280^2 / (2 * 75000) = 0.5226 J,
    # v = 280 / sqrt(4/7 * 75000) = 280 / sqrt(3e5 / 7)
    v = ir.transient_speed_limit(280.0, 75.0, 0.6, 12.0)
    assert v == pytest.approx(1.352528496, rel=1e-9)
    assert v == pytest.approx(280.0 / math.sqrt(3.0e5 / 7.0), rel=1e-12)
    assert ir.reduced_mass(0.6, 12.0) == pytest.approx(4.0 / 7.0, rel=1e-12)
    assert ir.transient_energy_limit(280.0, 75.0) == pytest.approx(78400.0 / 150000.0, rel=1e-12)
    r = ir.contact_speed("hand", ir.simplified_effective_mass(20.0, 2.0), contact_area_cm2=A_FORCE)
    assert r.speed_mps == pytest.approx(1.352528496, rel=1e-9) and r.governing_route == "force"


def test_upper_arm_closed_form():
    # references.md item 6 [D]: upper arm at 12 kg gives sqrt(5)/2 exactly
    assert ir.contact_speed("upper_arm", 12.0, contact_area_cm2=A_FORCE).speed_mps == pytest.approx(math.sqrt(5) / 2, rel=1e-12)


def test_hand_speed_curve_and_limit():
    # references.md item 6 [D]: hand speed over m_R; the m_R -> inf limit F_T / sqrt(m_H K)
    m_r = np.array([1.0, 5.0, 9.0, 12.0, 50.0, np.inf])
    expected = [1.669597, 1.396885, 1.363221, 1.352528, 1.327829, 1.319933]
    v = ir.contact_speed("hand", m_r, contact_area_cm2=A_FORCE).speed_mps
    np.testing.assert_allclose(v, expected, rtol=1e-6)
    assert v[-1] == pytest.approx(280.0 / math.sqrt(0.6 * 75000.0), rel=1e-12)
    assert np.all(np.diff(v) < 0)
    # approaching the limit from above
    assert ir.contact_speed("hand", 1e9, contact_area_cm2=A_FORCE).speed_mps == pytest.approx(v[-1], rel=1e-9)
    assert ir.contact_speed("hand", 1e9, contact_area_cm2=A_FORCE).speed_mps > v[-1]


positive = st.floats(1e-2, 1e3, allow_nan=False, allow_infinity=False)


@settings(max_examples=30, deadline=None)
@given(force=positive, k=positive, m_h=positive, m_r=positive)
def test_energy_identity(force, k, m_h, m_r):
    # Annex A clause A.3 [S]: 1/2 mu v^2 = F^2 / (2k), k = K * 1000
    mu = ir.reduced_mass(m_h, m_r)
    v = ir.transient_speed_limit(force, k, m_h, m_r)
    assert 0.5 * mu * v**2 == pytest.approx(force**2 / (2.0 * k * 1000.0), rel=1e-12)
    assert ir.transient_energy_limit(force, k) == pytest.approx(0.5 * mu * v**2, rel=1e-12)
    # reduced mass lies below both masses (a property of (1/a + 1/b)^-1)
    assert mu < min(m_h, m_r)


@settings(max_examples=30, deadline=None)
@given(key=st.sampled_from(sorted(CHECK_12KG)), m_r=positive, factor=st.floats(1.01, 100.0))
def test_speed_decreases_with_robot_mass(key, m_r, factor):
    # property of v = F / sqrt(mu k): mu grows with m_R, so v falls
    v = ir.contact_speed(key, [m_r, m_r * factor, np.inf], contact_area_cm2=A_FORCE).speed_mps
    assert v[0] > v[1] > v[2] > 0.0


@pytest.mark.parametrize("key", ["skull_forehead", "face"])
def test_head_not_permitted(key):
    # Annex A [S]: no transient contact with skull/forehead or face
    r = ir.contact_speed(key, [1.0, 12.0, np.inf], contact_area_cm2=A_FORCE)
    assert not r.permitted
    np.testing.assert_array_equal(r.speed_mps, [0.0, 0.0, 0.0])     # 0, not NaN
    assert r.energy_limit_J == 0.0
    assert "is not permitted" in r.reason and key in r.reason
    assert "NOT PERMITTED" in r.text()
    assert_caution(r.text())


def test_model_input_errors():
    with pytest.raises(ValueError, match=r"`robot_mass_kg` must be > 0 \(inf allowed\); got 0.0"):
        ir.reduced_mass(1.0, 0.0)
    with pytest.raises(ValueError, match=r"`body_mass_kg` must be finite and > 0; got inf"):
        ir.reduced_mass(np.inf, 1.0)
    with pytest.raises(ValueError, match=r"`force_N` must be finite and > 0; got nan"):
        ir.transient_speed_limit(np.nan, 1.0, 1.0, 1.0)
    with pytest.raises(ValueError, match=r"'wrist' is not a body region of .*body_regions.toml; "
                                         r"available regions: skull_forehead, face"):
        ir.contact_speed("wrist", 1.0, contact_area_cm2=A_FORCE)


# ------------------------------------------------------------------------- arms
def test_case_b_simplified_mass_is_non_conservative(arm_b):
    # references.md item 6 [D]: Case B, M = 3 kg -> M/2 = 1.5 kg -> 1.561765 m/s; the apparent
    # mass along link 2 at q = (pi/4, pi/6) is m2 + m1 / sin^2 q2 = 9 kg -> 1.363221 m/s
    q = np.array([np.pi / 4, np.pi / 6])
    u = link2_direction(q)
    apparent = ir.permissible_speed(arm_b, q, u, "hand", contact_area_cm2=A_FORCE)
    simplified = ir.permissible_speed(arm_b, q, u, "hand", effective_mass="simplified", contact_area_cm2=A_FORCE)
    assert apparent.effective_mass_kg == pytest.approx(9.0, rel=1e-9)
    assert simplified.effective_mass_kg == 1.5
    assert apparent.speed_mps == pytest.approx(1.363221, rel=1e-6)
    assert simplified.speed_mps == pytest.approx(1.561765, rel=1e-6)
    assert simplified.speed_mps > apparent.speed_mps          # non-conservative
    assert apparent.mass_model == "apparent" and simplified.mass_model == "simplified"
    assert_caution(repr(apparent))
    assert "9 kg" in apparent.text() and "1.363 m/s" in apparent.text()


@pytest.mark.parametrize("batch_ndim", range(0, 4))
def test_permissible_speed_batches(arm_b, batch_ndim):
    rng = np.random.default_rng(5)
    shape = (2, 3, 2)[:batch_ndim]
    q = rng.uniform(0.3, 2.8, size=shape + (2,))
    ang = rng.uniform(-np.pi, np.pi, size=shape)
    u = np.stack([np.cos(ang), np.sin(ang), np.zeros_like(ang)], axis=-1)
    r = ir.permissible_speed(arm_b, q, u, "lower_arm", contact_area_cm2=A_FORCE)
    assert np.shape(r.speed_mps) == shape and np.shape(r.effective_mass_kg) == shape
    # closed-form effective mass (references.md item 8 oracle 1 [D]) through the model
    m_r = closed_form_mass_along(q, u)
    np.testing.assert_allclose(r.effective_mass_kg, m_r, rtol=1e-9)
    np.testing.assert_allclose(r.speed_mps, ir.transient_speed_limit(320.0, 40.0, 2.0, m_r),
                               rtol=1e-9)


def test_singular_direction_uses_body_mass(arm_b):
    # stretched out (q2 = 0) the arm cannot be pushed along link 2: m_R = inf, mu = m_H,
    # v = F_T / sqrt(m_H k) (the m_R -> inf limit of the model)
    r = ir.permissible_speed(arm_b, [0.3, 0.0], [math.cos(0.3), math.sin(0.3), 0.0], "hand", contact_area_cm2=A_FORCE)
    assert r.effective_mass_kg == np.inf
    assert r.speed_mps == pytest.approx(280.0 / math.sqrt(0.6 * 75000.0), rel=1e-12)


def test_permissible_speed_errors(arm_b):
    with pytest.raises(ValueError, match=r"`u` must be unit vectors"):
        ir.permissible_speed(arm_b, [0.5, 0.5], [2.0, 0.0, 0.0], "hand", contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"`u` must lie in the span"):
        ir.permissible_speed(arm_b, [0.5, 0.5], [0.0, 0.0, 1.0], "hand", contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"'half' is not a valid effective_mass; supported "
                                         r"values are apparent, simplified"):
        ir.permissible_speed(arm_b, [0.5, 0.5], [1.0, 0.0, 0.0], "hand", effective_mass="half", contact_area_cm2=A_FORCE)


# ------------------------------------------------------------------------- maps
@pytest.fixture(scope="module")
def region_b():
    return ir.Rectangle((0.9, 0.7, 0.0), ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), (0.6, 0.4), 0.1)


@pytest.fixture(scope="module")
def map_b(arm_b, region_b):
    return ir.contact_speed_map(arm_b, region_b, "hand", direction=(0.0, -1.0, 0.0), contact_area_cm2=A_FORCE)


def test_map_equals_permissible_speed_at_its_q(arm_b, map_b):
    ok = np.isin(map_b.status.values, ir.SOLVED)
    assert ok.sum() >= 10
    q = map_b.q.values[ok]
    u = np.array([0.0, -1.0, 0.0])
    r = ir.permissible_speed(arm_b, q, u, "hand", contact_area_cm2=A_FORCE)
    np.testing.assert_allclose(map_b.permissible_speed.values[ok], r.speed_mps, rtol=1e-9)
    np.testing.assert_allclose(map_b.effective_mass.values[ok], r.effective_mass_kg, rtol=1e-9)
    # closed form for the point-mass arm (references.md item 8, oracle 1 [D])
    np.testing.assert_allclose(map_b.effective_mass.values[ok],
                               closed_form_mass_along(q, u), rtol=1e-9)
    assert map_b.permissible_speed.dims == ("v_m", "u_m")
    assert map_b.permissible_speed.attrs["units"] == "m s^-1"
    assert map_b.effective_mass.attrs["units"] == "kg"
    for var in ("permissible_speed", "effective_mass"):
        assert {"units", "long_name", "description"} <= set(map_b[var].attrs)


def test_map_attrs_carry_region_source_and_caution(map_b):
    a = map_b.attrs
    assert a["caution"] == CONTACT_CAUTION
    assert_caution(a["caution"])
    assert a["body_region"] == "hand"
    assert (a["body_region_effective_mass_kg"], a["body_region_spring_constant_Npmm"],
            a["body_region_transient_force_N"]) == (0.6, 75.0, 280.0)   # Annex A via references.md
    assert "ISO/TS 15066:2016" in a["body_region_source"]
    assert "[S]" in a["body_region_status"]
    assert "expected to change" in a["body_region_note"]
    assert a["direction"] == [0.0, -1.0, 0.0]
    assert a["effective_mass_model"] == "apparent"


def test_map_unsolved_points_are_nan_with_status(arm_b):
    pts = ir.PointSet(((1.2, 0.6, 0.0), (3.0, 0.0, 0.0)))
    ds = ir.contact_speed_map(arm_b, pts, "chest", direction=(1.0, 0.0, 0.0), contact_area_cm2=A_FORCE)
    assert ds.status.values[0] == 0 and ds.status.values[1] != 0
    assert np.isfinite(ds.permissible_speed.values[0])
    assert np.isnan(ds.permissible_speed.values[1])


def test_map_default_direction_from_task_and_projection(arm_b, region_b):
    # the task's approach (projected into the task plane and normalised) is the default
    task = ir.Task(region_b, 0.0, None, (0.0, -0.6, 0.8))
    ds = ir.contact_speed_map(arm_b, task, "hand", contact_area_cm2=A_FORCE)
    np.testing.assert_allclose(ds.attrs["direction"], [0.0, -1.0, 0.0], atol=1e-15)
    with pytest.raises(ValueError, match=r"no direction of motion: give `direction`"):
        ir.contact_speed_map(arm_b, region_b, "hand", contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"has no part in the task span"):
        ir.contact_speed_map(arm_b, region_b, "hand", direction=(0.0, 0.0, 1.0), contact_area_cm2=A_FORCE)


def test_map_not_permitted_region_is_zero(arm_b, region_b):
    ds = ir.contact_speed_map(arm_b, region_b, "face", direction=(1.0, 0.0, 0.0), contact_area_cm2=A_FORCE)
    ok = np.isin(ds.status.values, ir.SOLVED)
    np.testing.assert_array_equal(ds.permissible_speed.values[ok], 0.0)
    assert ds.attrs["transient_contact"].startswith("not permitted")
    assert ds.attrs["body_region_transient_force_N"] == "not permitted"


def test_map_simplified_model(arm_b, region_b):
    ds = ir.contact_speed_map(arm_b, region_b, "hand", direction=(1.0, 0.0, 0.0),
                              effective_mass="simplified", contact_area_cm2=A_FORCE)
    ok = np.isin(ds.status.values, ir.SOLVED)
    np.testing.assert_array_equal(ds.effective_mass.values[ok], 1.5)   # M/2, M = 3 kg (Case B)
    np.testing.assert_allclose(ds.permissible_speed.values[ok], 1.561765, rtol=1e-6)


def test_map_saves_to_netcdf(map_b, tmp_path):
    path = ir.save_results(map_b, tmp_path / "speed.nc")
    back = ir.load_results(path)
    np.testing.assert_array_equal(back.permissible_speed.values, map_b.permissible_speed.values)
    assert back.attrs["caution"] == map_b.attrs["caution"]


# ------------------------------------------------------------------------- speed checks
def test_check_speeds_pass_and_fail_at_case_b(arm_b):
    # references.md item 6 [D]: at q = (pi/4, pi/6) moving along link 2 the hand limit is
    # 1.363221 m/s; 1.30 m/s passes, 1.40 m/s fails
    q = np.array([[np.pi / 4, np.pi / 6]] * 2)
    u = link2_direction(q)
    check = ir.check_speeds(arm_b, None, [1.30, 1.40], q=q, directions=u, body_region="hand", contact_area_cm2=A_FORCE)
    np.testing.assert_allclose(check.permissible_speed_mps, 1.363221, rtol=1e-6)
    np.testing.assert_allclose(check.margin_mps, [1.363221 - 1.30, 1.363221 - 1.40], atol=1e-6)
    assert check.ok.tolist() == [True, False]
    assert check.worst == 1 and not check.all_ok
    assert "worst sample 1" in check.text() and "NOT all samples within" in check.text()
    assert_caution(repr(check))
    # velocity vectors carry the direction themselves
    again = ir.check_speeds(arm_b, None, u * np.array([[1.30], [1.40]]), q=q, body_region="hand", contact_area_cm2=A_FORCE)
    np.testing.assert_allclose(again.margin_mps, check.margin_mps, rtol=1e-12)


def test_check_speeds_along_a_path_matches_permissible_speed(arm_b, map_b):
    # a straight move along -y; directions from the path itself
    pts = np.stack([np.full(7, 1.1), np.linspace(0.9, 0.3, 7), np.zeros(7)], axis=-1)
    speeds = np.linspace(0.2, 1.0, 7)
    check = ir.check_speeds(arm_b, pts, speeds, body_region="hand", contact_area_cm2=A_FORCE)
    assert np.all(check.status == 0)
    np.testing.assert_allclose(check.directions, np.tile([0.0, -1.0, 0.0], (7, 1)), atol=1e-12)
    r = ir.permissible_speed(arm_b, check.q, [0.0, -1.0, 0.0], "hand", contact_area_cm2=A_FORCE)
    np.testing.assert_allclose(check.permissible_speed_mps, r.speed_mps, rtol=1e-12)
    np.testing.assert_allclose(check.margin_mps, r.speed_mps - speeds, rtol=1e-12)
    np.testing.assert_allclose(check.ratio, speeds / r.speed_mps, rtol=1e-12)
    assert check.worst == int(np.argmin(r.speed_mps - speeds))
    np.testing.assert_allclose(arm_b.tool_position(check.q), pts, atol=1e-9)
    # the same check driven by the map (design, region, model and posture from its attrs)
    from_map = ir.check_speeds(map_b, pts, speeds)
    np.testing.assert_allclose(from_map.margin_mps, check.margin_mps, rtol=1e-12)
    assert from_map.body_region.key == check.body_region.key == "hand"
    assert from_map.body_area == check.body_area
    assert from_map.contact_area_cm2 == check.contact_area_cm2 == A_FORCE


def test_check_speeds_without_direction_uses_worst_case(arm_b):
    # no direction (one point, scalar speed): the largest principal apparent mass is used,
    # the lowest permissible speed over all directions
    q = np.array([0.6, 1.1])
    pt = arm_b.tool_position(q)
    check = ir.check_speeds(arm_b, pt[None], [0.5], q=q[None], body_region="hand", contact_area_cm2=A_FORCE)
    assert check.worst_case_direction.tolist() == [True]
    m_max = ir.principal_masses(arm_b, q).masses[-1]
    assert check.effective_mass_kg[0] == pytest.approx(m_max, rel=1e-12)
    ang = np.linspace(0, 2 * np.pi, 73)
    u = np.stack([np.cos(ang), np.sin(ang), 0 * ang], axis=-1)
    v_all = ir.permissible_speed(arm_b, q, u, "hand", contact_area_cm2=A_FORCE).speed_mps
    assert check.permissible_speed_mps[0] <= v_all.min() * (1 + 1e-12)


def test_check_speeds_unsolved_and_not_permitted(arm_b):
    pts = [[1.2, 0.6, 0.0], [3.0, 0.0, 0.0]]
    check = ir.check_speeds(arm_b, pts, [0.1, 0.1], body_region="hand", contact_area_cm2=A_FORCE)
    assert check.ok.tolist() == [True, False] and check.unsolved == 1
    assert np.isnan(check.margin_mps[1]) and check.worst == 0
    face = ir.check_speeds(arm_b, pts[:1], [0.0], body_region="face", contact_area_cm2=A_FORCE)
    assert face.ok.tolist() == [False] and "not permitted" in face.reason
    assert "NOT PERMITTED" in face.text()


def test_check_speeds_errors(arm_b):
    with pytest.raises(ValueError, match=r"give `body_region`"):
        ir.check_speeds(arm_b, [[1.2, 0.6, 0.0]], [0.1], contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"`speeds` must have shape \(1,\)"):
        ir.check_speeds(arm_b, [[1.2, 0.6, 0.0]], [0.1, 0.2], body_region="hand", contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"`q` and `points` disagree"):
        ir.check_speeds(arm_b, [[1.2, 0.6, 0.0]], [0.1], q=[[0.0, 0.0]], body_region="hand", contact_area_cm2=A_FORCE)
    with pytest.raises(ValueError, match=r"direction of motion of sample 0 leaves the task span"):
        ir.check_speeds(arm_b, [[1.2, 0.6, 0.0]], [0.1], directions=[[0, 0, 1.0]],
                        body_region="hand", contact_area_cm2=A_FORCE)
    with pytest.raises(TypeError, match=r"must be an Arm or a Dataset from contact_speed_map"):
        ir.check_speeds("arm", [[1.2, 0.6, 0.0]], [0.1], body_region="hand")


def test_public_names():
    for name in ("load_body_regions", "permissible_speed", "contact_speed_map", "check_speeds",
                 "contact_speed", "reduced_mass", "transient_speed_limit",
                 "transient_energy_limit", "simplified_effective_mass"):
        assert name in ir.__all__ and callable(getattr(ir, name))


# ------------------------------------------------------------------------- pressure route
# Transient-contact model, ISO/TS 15066:2016 Annex A clause A.3 [S] (references.md item 6):
# v = min(F_T, p_T A) / sqrt(mu k). Pressures of Table A.2 via references.md item 6 [S]:
# sternum 120 N/cm^2, palm 260, thenar eminence 200, back of hand 200 (transient = 2x, [S]).
def test_sternum_pressure_route_governs_by_hand():
    # chest: m_H = 40 kg, K = 25 N/mm; m_R = 12 kg -> mu = 1/(1/40 + 1/12) = 120/13 kg exactly,
    # mu k = 3e6/13; force route 280 sqrt(13/3e6), pressure route 240 * 1 cm^2 * sqrt(13/3e6)
    r = ir.contact_speed("chest", 12.0, contact_area_cm2=1.0, body_area="sternum")
    v_force = 280.0 * math.sqrt(13.0 / 3.0e6)
    v_press = 240.0 * math.sqrt(13.0 / 3.0e6)
    assert r.force_speed_mps == pytest.approx(v_force, rel=1e-12)
    assert r.pressure_speed_mps == pytest.approx(v_press, rel=1e-12)
    assert r.speed_mps == pytest.approx(v_press, rel=1e-12)
    assert (round(v_press, 4), round(v_force, 4)) == (0.4996, 0.5829)     # the figures
    assert r.governing_route == "pressure"
    assert r.body_area.key == "sternum" and r.contact_area_cm2 == 1.0
    assert r.energy_limit_J == pytest.approx(240.0**2 / (2 * 25000.0), rel=1e-12)
    assert "pressure route governs" in r.text() and "Sternum" in r.text()
    assert_caution(r.text())


def test_palm_force_route_governs_reference_value():
    # references.md item 6: hand, palm, p_T = 2 x 260 = 520 N/cm^2, A = 1 cm^2 -> 2.511839 m/s
    # by pressure; the force route gives 1.352528 m/s, so force governs.
    # By hand: mu = 0.6 * 12 / 12.6 = 4/7 kg, mu k = 3e5/7.
    r = ir.contact_speed("hand", 12.0, contact_area_cm2=1.0, body_area="palm")
    assert r.pressure_speed_mps == pytest.approx(520.0 / math.sqrt(3.0e5 / 7.0), rel=1e-12)
    assert r.pressure_speed_mps == pytest.approx(2.511839, rel=1e-6)   # references.md, 7 digits
    assert r.force_speed_mps == pytest.approx(1.352528496, rel=1e-9)   # references.md, 10 digits
    assert r.speed_mps == r.force_speed_mps and r.governing_route == "force"


def test_governing_area_is_the_lowest_pressure():
    # hand areas (references.md item 6 [S]): forefinger pad 300, end joint 280, thenar 200,
    # palm 260, back of hand 200 -> lowest 200 N/cm^2 (thenar eminence first in file order)
    hand = ir.load_body_regions()["hand"]
    assert [a.key for a in hand.areas] == ["forefinger_pad", "forefinger_end_joint",
                                           "thenar_eminence", "palm", "back_of_hand"]
    assert [a.quasi_static_pressure_Npcm2 for a in hand.areas] == [300.0, 280.0, 200.0, 260.0, 200.0]
    assert all(a.transient_pressure_Npcm2 == 2 * a.quasi_static_pressure_Npcm2 for a in hand.areas)
    assert hand.area().key == "thenar_eminence"
    r = ir.contact_speed("hand", 12.0, contact_area_cm2=0.5)
    assert r.body_area.key == "thenar_eminence"
    assert r.speed_mps == pytest.approx(400.0 * 0.5 / math.sqrt(3.0e5 / 7.0), rel=1e-12)
    assert r.governing_route == "pressure"
    with pytest.raises(ValueError, match=r"'wrist' is not a body area of region 'hand'; "
                                         r"available areas: forefinger_pad"):
        ir.contact_speed("hand", 12.0, contact_area_cm2=1.0, body_area="wrist")


@pytest.mark.parametrize("key, area, crossover", [
    ("chest", "sternum", 280.0 / 240.0), ("hand", "thenar_eminence", 280.0 / 400.0),
    ("lower_leg", "calf_muscle", 260.0 / 420.0), ("back_shoulders", "shoulder_joint", 420.0 / 320.0)])
def test_crossover_area(key, area, crossover):
    # both routes share sqrt(mu k): they are equal at A* = F_T / p_T (by hand from the table)
    region = ir.load_body_regions()[key]
    assert region.crossover_area_cm2(area) == pytest.approx(crossover, rel=1e-15)
    at = ir.contact_speed(key, [1.0, 12.0, np.inf], contact_area_cm2=crossover, body_area=area)
    np.testing.assert_allclose(at.pressure_speed_mps, at.force_speed_mps, rtol=1e-12)
    below = ir.contact_speed(key, 12.0, contact_area_cm2=crossover * 0.99, body_area=area)
    above = ir.contact_speed(key, 12.0, contact_area_cm2=crossover * 1.01, body_area=area)
    assert below.governing_route == "pressure" and above.governing_route == "force"
    assert below.speed_mps == pytest.approx(0.99 * above.force_speed_mps, rel=1e-12)
    assert above.speed_mps == above.force_speed_mps


@settings(max_examples=40, deadline=None)
@given(key=st.sampled_from(sorted(CHECK_12KG)), m_r=positive,
       area_cm2=st.floats(1e-2, 1e2, allow_nan=False))
def test_speed_is_the_minimum_over_routes(key, m_r, area_cm2):
    # model rule (Annex A [S]): the permissible speed is the lower of both routes, each
    # computed here from the table values by the force-route formula with F = F_T or p_T A
    region = ir.load_body_regions()[key]
    a = region.area()
    r = ir.contact_speed(key, m_r, contact_area_cm2=area_cm2)
    v_f = ir.transient_speed_limit(region.transient_force_N, region.spring_constant_Npmm,
                                   region.effective_mass_kg, m_r)
    v_p = ir.transient_speed_limit(a.transient_pressure_Npcm2 * area_cm2,
                                   region.spring_constant_Npmm, region.effective_mass_kg, m_r)
    assert r.speed_mps == pytest.approx(min(v_f, v_p), rel=1e-12)
    assert r.speed_mps <= min(r.force_speed_mps, r.pressure_speed_mps)
    assert r.governing_route == ("pressure" if v_p < v_f else "force")
    # no area of the region gives a lower speed than the governing one
    for other in region.areas:
        v = ir.contact_speed(key, m_r, contact_area_cm2=area_cm2, body_area=other.key).speed_mps
        assert v >= r.speed_mps * (1 - 1e-12)


def test_contact_area_is_required_and_checked(arm_b):
    with pytest.raises(ValueError, match=r"`contact_area_cm2` is required"):
        ir.contact_speed("hand", 12.0)
    with pytest.raises(ValueError, match=r"`contact_area_cm2` is required"):
        ir.permissible_speed(arm_b, [0.5, 0.5], [1.0, 0.0, 0.0], "hand")
    with pytest.raises(ValueError, match=r"`contact_area_cm2` is required"):
        ir.check_speeds(arm_b, [[1.2, 0.6, 0.0]], [0.1], body_region="hand")
    for bad, why in [(0.0, "between 0.0001"), (-1.0, "between"), (np.nan, "between"),
                     (1e300, "between"), (True, "one number"), ("1", "one number"),
                     ([1.0, 2.0], "one number")]:
        with pytest.raises(ValueError, match=r"`contact_area_cm2` must be " ".*" + why.split()[0]):
            ir.contact_speed("hand", 12.0, contact_area_cm2=bad)


def test_map_and_check_with_a_small_area(arm_b, region_b):
    # a 0.3 cm^2 edge hitting the hand: pressure route (0.3 < 0.7 cm^2), thenar eminence
    ds = ir.contact_speed_map(arm_b, region_b, "hand", contact_area_cm2=0.3,
                              direction=(0.0, -1.0, 0.0))
    a = ds.attrs
    assert (a["governing_route"], a["body_area"], a["contact_area_cm2"]) == (
        "pressure", "thenar_eminence", 0.3)
    assert a["crossover_area_cm2"] == pytest.approx(0.7, rel=1e-15)
    assert a["body_area_transient_pressure_Npcm2"] == 400.0
    assert "pressure route governs" in a["route_description"]
    ok = np.isin(ds.status.values, ir.SOLVED)
    m_r = ds.effective_mass.values[ok]
    np.testing.assert_allclose(ds.permissible_speed.values[ok],
                               ir.transient_speed_limit(120.0, 75.0, 0.6, m_r), rtol=1e-12)
    assert a["energy_limit_J"] == pytest.approx(120.0**2 / (2 * 75000.0), rel=1e-12)
    pts = np.stack([np.full(4, 1.1), np.linspace(0.9, 0.5, 4), np.zeros(4)], axis=-1)
    from_map = ir.check_speeds(ds, pts, np.full(4, 0.3))
    assert from_map.governing_route == "pressure" and from_map.contact_area_cm2 == 0.3
    assert "pressure route governs" in from_map.text()
    direct = ir.check_speeds(arm_b, pts, np.full(4, 0.3), body_region="hand",
                             contact_area_cm2=0.3)
    np.testing.assert_allclose(from_map.permissible_speed_mps, direct.permissible_speed_mps,
                               rtol=1e-12)


def test_caution_states_what_is_covered():
    # brief: the caution says what the estimate covers (the tool point only) and what not
    for phrase in ("TOOL POINT only", "NOT covered", "other links", "clamping", "sharp edges",
                   "force and pressure routes"):
        assert phrase in CONTACT_CAUTION, phrase
