"""Global conditioning index of the planar 2R arm: quadrature of the core's isotropy index.

Source of the check values: references.md item 5 (GCI of Gosselin & Angeles 1991, ASME J.
Mech. Design 113(3):220-226; the index and its authors [S] via Boschetti et al. 2011;
definition [M]; values [D], mpmath at 30 digits, 2-norm values
corrected on 2026-12-04 after an unsplit quadrature had given 0.3749846916 / 0.4360510472).
For the 2R arm kappa depends on q2 only, so q1 integrates out:

- joint-space mean   GCI_q = (1/pi) int_0^pi (1/kappa) dq2;
- workspace mean     GCI_W = int_0^pi (1/kappa) |sin q2| dq2 / int_0^pi |sin q2| dq2
  (dA = l1 l2 |sin q2| dq1 dq2, references.md item 5).

The integrand is ``ir.isotropy_index`` (inverse 2-norm condition number, from the core);
the Frobenius variant kappa_F = (1/n) ||J||_F ||J^-1||_F is built from ``Arm.jacobian``.
The quadrature is scipy's adaptive ``quad``, split at q2 = 3 pi / 4 where the isotropic design
(l1 = sqrt(2) l2) has kappa = 1 and the 2-norm index a kink (references.md item 5). The two
Frobenius closed forms for l1 = l2 (ln 5 / pi and (pi/4)(3 - sqrt 5), item 5 [D]) are exact.
"""

import math

import numpy as np
import pytest
from scipy.integrate import quad

import inertia_review as ir

KINK = 3.0 * math.pi / 4.0


def _arm(l1):
    return ir.planar_chain([l1, 1.0], [1.0, 1.0])


def _iso_2norm(arm):
    return lambda q2: float(ir.isotropy_index(arm, np.array([0.0, q2])))


def _iso_frobenius(arm):
    axes = arm.task_axes                       # (2, 3): the plane of the arm

    def f(q2):
        jt = axes @ arm.jacobian(np.array([0.0, q2]))[:3]      # (2, 2) task Jacobian
        det = abs(np.linalg.det(jt))
        if det == 0.0:
            return 0.0
        # ||J^-1||_F = ||J||_F / |det J| for a 2x2 matrix, so 1/kappa_F = 2 |det J| / ||J||_F^2
        return 2.0 * det / float(np.sum(jt**2))
    return f


def _means(f, lo=0.0, hi=math.pi):
    """(joint-space mean, workspace mean) of f over q2 in [lo, hi], split at the kink."""
    points = [KINK] if lo < KINK < hi else None
    opts = dict(points=points, epsabs=1e-13, epsrel=1e-13, limit=200)
    joint = quad(f, lo, hi, **opts)[0] / (hi - lo)
    area = quad(lambda t: f(t) * abs(math.sin(t)), lo, hi, **opts)[0]
    norm = quad(lambda t: abs(math.sin(t)), lo, hi, **opts)[0]
    return joint, area / norm


@pytest.mark.parametrize("l1, joint, workspace", [
    (math.sqrt(2.0), 0.3749777219, 0.4360433057),     # isotropic design, item 5 [D] (corrected)
    (1.0, 0.3062800452, 0.3610945707),                # equal links, item 5 [D]
])
def test_gci_2norm_quadrature(l1, joint, workspace):
    got_joint, got_workspace = _means(_iso_2norm(_arm(l1)))
    assert got_joint == pytest.approx(joint, rel=1e-9)
    assert got_workspace == pytest.approx(workspace, rel=1e-9)


def test_gci_isotropic_design_is_not_the_unsplit_value():
    # the values printed before the correction (item 5: from an unsplit quadrature) differ
    # from the corrected ones by ~7e-6; the core's index must reproduce the corrected ones
    got_joint, got_workspace = _means(_iso_2norm(_arm(math.sqrt(2.0))))
    assert abs(got_joint - 0.3749846916) > 1e-6
    assert abs(got_workspace - 0.4360510472) > 1e-6
    # kappa = 1 at the kink (isotropic posture, l1 = sqrt(2) l2, q2 = 3 pi / 4)
    assert _iso_2norm(_arm(math.sqrt(2.0)))(KINK) == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("l1, joint, workspace", [
    (1.0, math.log(5.0) / math.pi, math.pi / 4.0 * (3.0 - math.sqrt(5.0))),   # closed forms [D]
    (math.sqrt(2.0), 0.5610998523, 0.6506451423),                              # item 5 [D]
])
def test_gci_frobenius_quadrature(l1, joint, workspace):
    got_joint, got_workspace = _means(_iso_frobenius(_arm(l1)))
    assert got_joint == pytest.approx(joint, rel=1e-9)
    assert got_workspace == pytest.approx(workspace, rel=1e-9)


def test_closed_forms_match_the_printed_values():
    # item 5 prints the closed forms to 10 digits: ln5/pi = 0.5122999987, (pi/4)(3-sqrt5) =
    # 0.5999908074
    assert math.log(5.0) / math.pi == pytest.approx(0.5122999987, rel=1e-9)
    assert math.pi / 4.0 * (3.0 - math.sqrt(5.0)) == pytest.approx(0.5999908074, rel=1e-9)


def test_gci_restricted_range():
    # item 5 [D]: l1 = l2 = 1, 2-norm, joint-space mean over q2 in [30, 150] degrees
    got_joint, _ = _means(_iso_2norm(_arm(1.0)), math.radians(30.0), math.radians(150.0))
    assert got_joint == pytest.approx(0.3826944358, rel=1e-9)
