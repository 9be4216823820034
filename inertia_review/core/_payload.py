"""Payload capacity and rated tool speed kernels in the batch-last layout (private).

The payload is a point mass m at the tool point (the design's payload inertia is kept as it
is): M(m) = M_0 + m J_v^T J_v (its kinetic energy m |J_v qd|^2 / 2) and the holding torque
g(m) = g_0 - m J_v^T g_W, where M_0, g_0 are the arm's without its design payload.
"""

import itertools

import numpy as np

from . import _dynamics, _metrics
from ._smallmat import cholesky_forward, lift, matmul, sym_eig, transpose

__all__ = ["payload_capacity", "max_tool_speed", "UNBOUNDED_PAYLOAD_KG", "BISECTION_STEPS"]

#: Payload above which the search stops and reports inf (no rated joint limits it).
UNBOUNDED_PAYLOAD_KG = 1.0e6
#: Root-finding steps after bracketing (Illinois regula falsi; converges superlinearly on
#: the smooth demand, so 12 steps reach round-off on the demo designs).
BISECTION_STEPS = 12
#: The search stops early once every kept payload loads its limiting joint to within this
#: fraction of the peak rating (demand / peak - 1 >= -EXCESS_TOL).
EXCESS_TOL = 1.0e-10


def _with_mass(params, terms, mass):
    """TaskTerms of ``terms`` with the mass matrix replaced (same kinematics)."""
    jt = terms.task_jacobian
    y, pivots = cholesky_forward(mass, np.swapaxes(jt, 0, 1))
    mass_singular = ~np.all(pivots > 0.0, axis=0)
    y = np.where(mass_singular, 0.0, y)
    mobility = matmul(transpose(y), y)
    eigvals, eigvecs = sym_eig(mobility)
    singular = (eigvals[0] <= _metrics.SINGULAR_RTOL * eigvals[-1]) | mass_singular
    if params.n < jt.shape[0]:
        singular = np.ones_like(singular)
    return terms._replace(mass=mass, mobility=mobility, eigvals=eigvals, eigvecs=eigvecs,
                          singular=singular)


#: The closed form of ``_linear_force_map`` is used where the payload-free apparent mass
#: has min/max eigenvalue ratio above this (far from the singular test of ``_metrics``).
LINEAR_MIN_RATIO = 1.0e-6


def _linear_force_map(params, terms):
    """Row norms of J_t^T Lambda(m) in closed form, for a square task Jacobian (n = k = 3).

    A point payload m adds m J_v^T J_v to M. With J_t = A J_v square and invertible and A
    orthogonal (three task axes), Lambda(m) = J_t^-T M(m) J_t^-1 = Lambda(m_0) + (m - m_0) I
    (the payload adds its mass to the apparent mass in every direction), so J_t^T Lambda(m)
    = F + (m - m_0) J_t^T with F = J_t^T Lambda(m_0), and the squared row norms are the
    quadratic c0 + 2 dm c1 + dm^2 c2 (Khatib 1987's Lambda; the identity is common practice,
    no source). Returns None unless n = k = 3; else (fast mask (N,), c0, c1, c2 (n, N)), fast
    where the payload-free Lambda is far from singular (``LINEAR_MIN_RATIO``); the other
    configurations keep the eigen-decomposition route.
    """
    jt = terms.task_jacobian
    if not (params.n == 3 and jt.shape[0] == 3):
        return None
    fmap, _ = _metrics._force_map(params, terms)                    # (n, k, N)
    with np.errstate(divide="ignore", invalid="ignore"):
        mu = 1.0 / terms.eigvals                                    # Lambda's eigenvalues
    free_low = mu[-1] - params.payload_mass                         # smallest, payload-free
    free_high = mu[0] - params.payload_mass
    fast = (~terms.singular & np.all(np.isfinite(mu), axis=0)
            & (free_low > LINEAR_MIN_RATIO * free_high))
    jtt = transpose(jt)                                             # (n, k, N)
    return (fast, np.sum(fmap * fmap, axis=1), np.sum(fmap * jtt, axis=1),
            np.sum(jtt * jtt, axis=1))


def payload_capacity(params, terms, accel_mps2):
    """Largest payload (N,) [kg] with every rated joint within its peak torque.

    Demand of joint j at payload m: |g_0j + m p_j| + a ||row_j(J_t^T Lambda(m))|| (the
    ``torque_headroom`` rule: gravity plus the worst task direction of acceleration a), with
    p = -J_v^T g_W. For a = 0 the first crossing is closed form per joint,
    m_j = (sign(p_j) tau_j - g_0j) / p_j; the smallest over joints is the capacity (0 if a joint
    is over its rating without payload; inf if no rated joint carries payload). For a > 0 it is
    an upper bound and the capacity is found between m = 0 and that bound (or a doubled
    bracket) by Illinois regula falsi, at most ``BISECTION_STEPS`` steps for all configurations
    at once (fewer once every point is within ``EXCESS_TOL`` of its rating). Payloads below
    the result are not each checked: where the demand is not monotone in m the result is a
    payload at which a joint reaches its rating.
    """
    jv = terms.jacobian[:3]
    rated = lift(np.isfinite(params.peak_torque), 1)               # (n, 1) or (n, N)
    peak = np.where(rated, lift(params.peak_torque, 1), np.inf)
    per_kg = -np.einsum("rjN,r->jN", jv, params.gravity)           # (n, N)
    hold0 = _dynamics.gravity_torque(params, terms.frames) - params.payload_mass * per_kg
    jtj = matmul(transpose(jv), jv)
    mass0 = terms.mass - params.payload_mass * jtj
    with np.errstate(divide="ignore", invalid="ignore"):
        cross_at = (np.sign(per_kg) * peak - hold0) / per_kg
    cross_at = np.where((per_kg != 0.0) & rated, cross_at, np.inf)
    cross_at = np.where(np.abs(hold0) > peak, 0.0, np.maximum(cross_at, 0.0))
    static = np.min(cross_at, axis=0)                               # (N,)
    if accel_mps2 <= 0.0:
        return static

    linear = _linear_force_map(params, terms)

    def excess(m):
        """max over rated joints of demand / peak - 1 (N,): <= 0 where feasible."""
        if linear is None:
            dyn = _metrics._dynamic_row_norms(params, _with_mass(params, terms, mass0 + m * jtj))
        else:
            fast, c0, c1, c2 = linear
            dm = m - params.payload_mass
            dyn = np.sqrt(np.maximum(c0 + dm * (2.0 * c1 + dm * c2), 0.0))
            if not np.all(fast):
                slow = ~fast
                trial = _with_mass(params, terms, mass0 + m * jtj)
                dyn = np.where(slow, _metrics._dynamic_row_norms(params, trial), dyn)
        demand = np.abs(hold0 + m * per_kg) + accel_mps2 * dyn
        ratio = np.where(rated, demand / np.where(rated, peak, 1.0), -1.0)
        return np.max(ratio, axis=0) - 1.0

    low = np.zeros_like(static)
    f_low = excess(low)
    ok0 = f_low <= 0.0                        # within every rating without payload
    high = np.where(np.isfinite(static), static, 1.0)
    f_high = excess(high)
    open_top = ~np.isfinite(static) & (f_high <= 0.0)
    while np.any(open_top):                      # double until infeasible or unbounded
        low = np.where(open_top, high, low)
        f_low = np.where(open_top, f_high, f_low)
        high = np.where(open_top, 2.0 * high, high)
        f_high = np.where(open_top, excess(high), f_high)
        open_top = open_top & (f_high <= 0.0) & (high < UNBOUNDED_PAYLOAD_KG)
    unbounded = f_high <= 0.0
    # Illinois regula falsi (Dowell & Jarratt, BIT 11, 1971): the secant through the
    # bracket ends, halving the weight of an end kept twice; plain bisection where a
    # demand is not finite (singular configurations)
    side = np.zeros(low.shape, dtype=np.int8)
    true_low = f_low.copy()                   # f at low (f_low is weighted by the halving)
    # a point stops (and keeps its result, whatever the rest of the batch does) once its
    # kept payload loads a joint to within EXCESS_TOL of its rating or its bracket is closed
    # to round-off; unbounded and unloadable points never start
    active = ok0 & ~unbounded
    for _ in range(BISECTION_STEPS):
        if not np.any(active):
            break
        finite = np.isfinite(f_low) & np.isfinite(f_high) & (f_high > f_low)
        secant = low - (np.where(finite, f_low, 0.0) * (high - low)
                        / np.where(finite, f_high - np.where(finite, f_low, 0.0), 1.0))
        mid = np.where(finite, secant, 0.5 * (low + high))
        mid = np.clip(mid, low, high)
        f_mid = excess(mid)
        good = (f_mid <= 0.0) & active
        bad = ~(f_mid <= 0.0) & active
        f_high = np.where(good & (side == 1), 0.5 * f_high, f_high)
        f_low = np.where(bad & (side == -1), 0.5 * f_low, f_low)
        low, f_low = np.where(good, mid, low), np.where(good, f_mid, f_low)
        true_low = np.where(good, f_mid, true_low)
        high, f_high = np.where(bad, mid, high), np.where(bad, f_mid, f_high)
        side = np.where(good, 1, np.where(bad, -1, side)).astype(np.int8)
        active &= ~((true_low >= -EXCESS_TOL) | (high - low <= 4.0 * np.finfo(float).eps * high))
    return np.where(~ok0, 0.0, np.where(unbounded, np.inf, low))


def max_tool_speed(params, terms):
    """Largest tool-point speed (N,) [m/s] in the task with every joint at its rated speed.

    Joint speed limits w_j = rated motor speed / gear ratio [rad/s]; the speed ||J_t qd|| is
    convex in qd, so its maximum over the box |qd_j| <= w_j is at a vertex: the largest over
    the 2^n sign patterns (common practice, no source). NaN if a joint has no rating.
    """
    limit = params.rated_speed / params.gear_ratio
    jt = terms.task_jacobian
    best = np.zeros(jt.shape[-1])
    if not np.all(np.isfinite(limit)):
        return np.full(jt.shape[-1], np.nan)
    scaled = jt * lift(limit, 1)[None]
    for signs in itertools.product((1.0, -1.0), repeat=params.n - 1):
        s = np.array((1.0,) + signs)
        v = np.einsum("knN,n->kN", scaled, s)
        best = np.maximum(best, np.sqrt(np.sum(v * v, axis=0)))
    return best
