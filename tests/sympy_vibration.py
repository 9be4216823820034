"""Independent sympy linearisation of a planar two-joint arm with joint springs.

Outside check for ``ir.natural_frequencies``; never imports ``inertia_review``. The arm
moves in the x-y plane (joint axes +z, gravity along -z plays no part): link i is a rigid
body of mass m_i, centre of mass at lc_i along the link, inertia I_i about its centre of
mass; joint i a torsional spring k_i. Lagrange: T = sum 1/2 m_i |v_ci|^2 + 1/2 I_i w_i^2,
V = 1/2 sum k_i dq_i^2; linearised about q0 (qd = 0): M(q0) dq'' + K dq = 0, so the
natural frequencies solve det(K - omega^2 M(q0)) = 0 (any vibrations text, e.g. Thomson &
Dahleh, Theory of Vibration with Applications, ch. 6, normal modes). Numbers are substituted
before any expression is built; nothing is simplified.
"""

import sympy as sp


def planar_2r_frequencies(m1, m2, l1, lc1, lc2, i1, i2, k1, k2, q0):
    """Natural frequencies [Hz] ascending and M(q0) (sympy Matrix) of the sprung planar 2R."""
    q1, q2, qd1, qd2 = sp.symbols("q1 q2 qd1 qd2", real=True)
    f = sp.Float
    c1 = sp.Matrix([f(lc1) * sp.cos(q1), f(lc1) * sp.sin(q1)])
    c2 = sp.Matrix([f(l1) * sp.cos(q1) + f(lc2) * sp.cos(q1 + q2),
                    f(l1) * sp.sin(q1) + f(lc2) * sp.sin(q1 + q2)])
    qd = sp.Matrix([qd1, qd2])
    v1 = c1.jacobian([q1, q2]) * qd
    v2 = c2.jacobian([q1, q2]) * qd
    energy = (f(m1) * v1.dot(v1) + f(m2) * v2.dot(v2) + f(i1) * qd1**2
              + f(i2) * (qd1 + qd2)**2) / 2
    subs = {q1: f(q0[0]), q2: f(q0[1])}
    mass = sp.Matrix(2, 2, lambda r, c: sp.diff(energy, qd[r], qd[c]).subs(subs))
    stiff = sp.diag(f(k1), f(k2))
    lam = sp.Symbol("lam")
    roots = sp.Poly((stiff - lam * mass).det(), lam).nroots(n=30)
    freqs = sorted(float(sp.sqrt(r) / (2 * sp.pi)) for r in roots)
    return freqs, mass
