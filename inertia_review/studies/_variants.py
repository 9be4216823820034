"""Many design variants scored in one batched pass (private).

V variants on P region points are evaluated as one batch of V*P configurations with
per-configuration parameters: every ``ArmParams`` array of variant v gets a trailing batch
axis (``stack_params``), which the core kernels accept in place of one arm's arrays
(``core._smallmat.lift``/``pmatmul``). The configurations come from the existing inverse
kinematics (``solve_positions``), warm-started across neighbouring variants:

1. variants are taken in groups of neighbours (consecutive in the order given, which for a
   grid sweep is the grid order); each group's middle variant (the *anchor*) is solved by
   ``solve_positions`` warm-started from the previous anchor's solution;
2. all variants of the group continue from the anchor's solution at once, by damped
   least-squares steps on the whole V*P batch;
3. every point the continuation does not settle (not converged, outside the requested
   posture, or no anchor solution) is solved again exactly as ``solve_positions`` of its
   variant does (same seed table), for all variants at once: the unsettled points of all
   variants are stacked with one arm per configuration and run through the numeric
   solver's steps once (``_ik_stacked.solve_positions_stacked``), so the scores equal the
   per-variant path's (``tests/test_variants.py``) up to the solver tolerance.

Variants with identical kinematics (payload, masses, ratings, materials) are solved once.
The scores then come from one batched pass of the core kernels per ~4,000 configurations
(``_score_chunk``): one ``task_terms`` shared by isotropy, mass ratio, headroom, acceleration
capability, first frequency, sag and payload capacity.

Arms that are not spatial three-joint arms on a three-axis task (the continuation's case)
are solved by ``solve_positions`` per variant (closed form for planar two-joint arms, with
the neighbour's solution as ``initial_q`` otherwise); the metrics are still batched.
"""

import numpy as np

from ..core import _kinematics, _metrics, _stiffness
from ..model._arm import Arm
from ..model._design import normalise_design
from ..model._errors import DesignError
from ..model._params import build_params
from ..model._paths import apply_values
from ..model._regions import Task
from ._ik import NOT_CONVERGED, OUT_OF_REACH, solve_positions
from ._ik_stacked import solve_positions_stacked
from ._ik_status import SOLVED
from ._ik_numeric import dls_stacked, reach_bound as _reach_bound
from ._maps import _stiffness_values
from ._posture import PostureRule, accepts, posture_rule, posture_value
from ._scores import scores_from_arrays
from ._stack import lift_to as _lift, stack_params, take_params as _take

__all__ = ["stack_params", "score_variants", "variant_params"]


def variant_params(spec, values, payload_kg=None):
    """(normalised spec, ArmParams) of one variant, validated like a design file.

    Raises DesignError naming the path when a value is not accepted.
    """
    out = apply_values(spec, values)
    if payload_kg is not None:
        out = apply_values(out, {"tool.payload_kg": float(payload_kg)})
    out = normalise_design(out)
    return out, build_params(out)


def _continue(params, q, targets, *, tolerance, max_iterations, like):
    """Damped least-squares steps from warm starts, all configurations at once.

    ``params`` holds one arm per configuration (``stack_params``; ``like`` one variant's
    ``ArmParams``); ``q`` (n, N) start inside the limits; the
    steps are clipped to the limits (as ``solve_positions`` does). Returns q and the
    residual [m] (N,).
    """
    a = params.task_axes
    count = q.shape[1]
    limits = _lift(params.limits, 2, count)
    low, high = limits[:, 0], limits[:, 1]
    lengths = (np.sqrt(np.sum(params.joint_position[1:] ** 2, axis=1)).sum(axis=0)
               + np.sqrt(np.sum(params.tool_position ** 2, axis=0)))
    damping = np.broadcast_to(1e-3 * lengths, (count,))
    # the same damped least-squares steps and stopping rule as solve_positions, per arm
    return dls_stacked(params, like, q, targets, tolerance=tolerance,
                       max_iterations=max_iterations, damping=damping, low=low, high=high,
                       shrink_below=0.5)


def _region_options(region, accel_mps2, payload_kg):
    task = region if isinstance(region, Task) else None
    if task is not None:
        region = task.region
        accel_mps2 = task.accel_mps2 if accel_mps2 is None else accel_mps2
        payload_kg = task.payload_kg if payload_kg is None else payload_kg
    accel = 0.0 if accel_mps2 is None else float(accel_mps2)
    if not np.isfinite(accel) or accel < 0.0:
        raise ValueError(f"`accel_mps2` must be a finite number >= 0 [m/s^2]; got {accel_mps2!r}")
    return region, accel, payload_kg


def score_variants(base, variants, region, *, accel_mps2=None, payload_kg=None,
                   posture="elbow_up", group_size=50, tolerance_m=1e-9, max_iterations=40,
                   exact=True, stiffness=True):
    """Scores of design variants on a region, in batched passes.

    Parameters
    ----------
    base : Arm
    variants : sequence of dict
        ``{parameter path: value}`` per variant; neighbours should follow each other
        (e.g. a grid in its grid order) for the warm starts to help.
    region : Task or region
        As for :func:`inertia_review.metric_map` (a Task supplies acceleration and payload).
    accel_mps2, payload_kg, posture :
        As for :func:`inertia_review.metric_map` ('elbow_up' or 'elbow_down').
    group_size : int
        Variants of distinct kinematics that continue from one anchor solution (one batched
        pass each). Variants with the same kinematics (e.g. a payload or material sweep)
        share one inverse-kinematics solution, which is what the per-variant path computes
        for each of them.
    exact : bool, default True
        Solve the points the continuation leaves unsettled (inside the reach bound) again
        with ``solve_positions``, exactly as the per-variant path does. With False they
        count as not solved (status ``not_converged``): much faster where part of the
        region is out of reach, and a solution missed this way can only lower the
        reachable fraction (``benchmarks/region_speed.py`` counts how often that happens).
    stiffness : bool, default True
        Also score ``f1_lowest_hz``, ``sag_largest_m`` and ``payload_rated_kg`` (as
        ``metric_map(stiffness=True)``); with False they are NaN and the pass is faster.

    Returns
    -------
    list of (dict or None, str)
        Per variant: its score row (``SCORE_COLUMNS``, as ``design_scores`` of its map)
        and an error text (empty when valid; the row is None when the variant is invalid).
    """
    if posture not in ("elbow_up", "elbow_down"):
        raise ValueError(f"batched variants support posture 'elbow_up' or 'elbow_down'; "
                         f"got {posture!r}")
    region, accel, payload = _region_options(region, accel_mps2, payload_kg)
    spec = base.to_dict()
    points, _ = region.sample()
    pts = points.reshape(-1, 3)
    count = pts.shape[0]
    options = {"table_size": int(min(16384, max(2048, 4 * count))), "tol": tolerance_m,
               "iters": max_iterations, "exact": exact, "posture": posture}
    out = [None] * len(variants)
    built = []
    for index, values in enumerate(variants):
        try:
            vspec, params = variant_params(spec, values, payload)
        except (DesignError, ValueError) as exc:
            out[index] = (None, str(exc))
            continue
        built.append((index, vspec, params))
    # runs of neighbours sharing the shapes, frames and model options one batch needs
    runs, current, key = [], [], None
    for item in built:
        k = _batch_key(item[2])
        if current and k != key:
            runs.append(current)
            current = []
        current.append(item)
        key = k
    if current:
        runs.append(current)
    previous = None
    chunk = max(1, _CHUNK_CONFIGS // max(count, 1))
    for run in runs:
        q, status, previous = _solve_run(run, pts, options, int(group_size), previous)
        for lo in range(0, len(run), chunk):
            part = slice(lo, lo + chunk)
            rows = _score_chunk(run[part], q[part], status[part], region, accel, stiffness)
            for (index, _, _), row in zip(run[part], rows):
                out[index] = (row, "")
    return out


#: the map variables behind the stiffness scores (f1, sag, rated payload)
_SCORED = ("first_frequency", "sag", "payload_capacity")
#: configurations per batched metrics pass (bounds the memory of one pass)
_CHUNK_CONFIGS = 4000
#: the arrays that fix an arm's kinematics (and so its inverse-kinematics solution)
_KINEMATIC = ("mount_rotation", "mount_position", "joint_rotation", "joint_position", "axis",
              "tool_position", "limits")


def _batch_key(p):
    """What variants must share to be batched together: array shapes, task frame, gravity,
    and which joints are rated, elastic or speed-rated (which map variables exist)."""
    return (p.n, p.task_axes.tobytes(), p.gravity.tobytes(), p.load_mass.shape,
            np.isfinite(p.peak_torque).tobytes(), np.isfinite(p.rated_speed).tobytes(),
            np.isfinite(_stiffness.equivalent_joint_stiffness(p)).tobytes(),
            _stiffness.has_compliance(p))


def _kinematic_key(p):
    return b"".join(np.ascontiguousarray(getattr(p, name)).tobytes() for name in _KINEMATIC)


def _solve_run(run, pts, options, group_size, previous):
    """Joint angles (V, P, n) and status (V, P) of a run of variants: one solve per distinct
    kinematics, in groups of ``group_size`` neighbours (``_solve_group``)."""
    classes, owner, reps = {}, [], []
    for item in run:
        key = _kinematic_key(item[2])
        if key not in classes:
            classes[key] = len(reps)
            reps.append(item)
        owner.append(classes[key])
    q_parts, s_parts, u_parts = [], [], []
    for lo in range(0, len(reps), group_size):
        q, status, previous, unsettled = _solve_group(reps[lo:lo + group_size], pts, options,
                                                      previous)
        q_parts.append(q)
        s_parts.append(status)
        u_parts.append(np.zeros(status.shape, dtype=bool) if unsettled is None else unsettled)
    q, status, unsettled = (np.concatenate(x) for x in (q_parts, s_parts, u_parts))
    if np.any(unsettled):      # exactly the per-variant solver there, for all variants at once
        _solve_exact([p for _, _, p in reps], pts, q, status, unsettled, options)
    owner = np.asarray(owner)
    return q[owner], status[owner], previous


def _solve_one(vspec, params, pts, posture, table_size, initial_q=None, tolerance_m=1e-9,
               max_iterations=40):
    arm = Arm(vspec, params)
    return solve_positions(arm, pts, posture=posture, table_size=table_size,
                           tolerance_m=tolerance_m, max_iterations=max_iterations,
                           initial_q=initial_q)


def _solve_group(group, pts, options, previous):
    """IK of a group of neighbouring variants (distinct kinematics): (q (V, P, n), status
    (V, P), the anchor's solution for the next group, and the (V, P) mask of the points the
    continuation left unsettled, to be solved again by ``_solve_exact``)."""
    posture, table_size = options["posture"], options["table_size"]
    tol, iters, exact = options["tol"], options["iters"], options["exact"]
    unsettled = None
    params_list = [p for _, _, p in group]
    n, k = params_list[0].n, params_list[0].task_axes.shape[0]
    count = pts.shape[0]
    v_count = len(group)
    q = np.full((v_count, count, n), np.nan)
    status = np.zeros((v_count, count), dtype=np.int8)
    anchor = v_count // 2
    if n == 3 and k == 3:
        _, aspec, aparams = group[anchor]
        warm = None if previous is None or previous.shape != (count, n) else previous
        sol = _solve_one(aspec, aparams, pts, posture, table_size, warm, tol, iters)
        start = sol.q                                             # (P, n)
        previous = np.where(np.isin(sol.status, SOLVED)[:, None], sol.q, np.nan)
        have = np.isfinite(start[:, 0])
        if np.any(have) and not np.all(have):   # unsolved points start from the nearest solved one
            from scipy.spatial import cKDTree
            _, near = cKDTree(pts[have]).query(pts[~have])
            start = start.copy()
            start[~have] = start[have][near]
            have = np.ones(count, dtype=bool)
        batched = stack_params(params_list, repeat=count)
        rel = (np.tile(pts.T, (1, v_count)) - _lift(batched.mount_position, 1, v_count * count))
        q0 = np.tile(np.where(have[:, None], start, 0.0).T, (1, v_count))
        q_c, residual = _continue(batched, q0, rel, tolerance=tol, max_iterations=iters,
                                  like=params_list[0])
        rules = [posture_rule(p) for p in params_list]        # each variant's own rule
        rule = PostureRule(rules[0].shoulder, rules[0].elbow,
                           np.repeat([r.sign for r in rules], count))
        pval = posture_value(rule, _kinematics.forward(batched, q_c))
        good = (residual <= tol * 10.0) & np.tile(have, v_count)
        good &= accepts(posture, pval)
        good = good.reshape(v_count, count)
        q[:] = np.moveaxis(q_c.reshape(n, v_count, count), 0, -1)
        # beyond the reach bound: out of reach whatever the seeds (as solve_positions)
        per_variant = stack_params(params_list)
        o1 = _lift(_kinematics.forward(per_variant, np.zeros((n, v_count))).origin[0], 1, v_count)
        mount = _lift(per_variant.mount_position, 1, v_count)
        bound = np.array([_reach_bound(p) for p in params_list])
        far = np.sqrt(np.sum((pts[None] - mount.T[:, None] - o1.T[:, None]) ** 2, axis=2))
        far = far > bound[:, None]
        q[~good & far] = np.nan
        status[~good & far] = OUT_OF_REACH
        bad = ~good & ~far
        q[bad] = np.nan
        status[bad] = NOT_CONVERGED       # continuation only; ``exact`` solves them again
        if exact:
            unsettled = bad
    else:
        for v, (_, vspec, params) in enumerate(group):
            sol = _solve_one(vspec, params, pts, posture, table_size, previous, tol, iters)
            q[v], status[v] = sol.q, sol.status
            if n != 2 or k != 2:
                previous = np.where(np.isin(sol.status, SOLVED)[:, None], sol.q, np.nan)
    return q, status, previous, unsettled


#: unsettled points per call of the stacked solver (bounds the memory of one pass)
_EXACT_POINTS = 20000


def _solve_exact(params_list, pts, q, status, unsettled, options):
    """Solve the unsettled points (V, P) of all variants again, as ``solve_positions`` of
    each variant on them does, in a few passes of the stacked solver (``_ik_stacked``);
    q (V, P, n) and status (V, P) are updated in place."""
    counts = unsettled.sum(axis=1)
    lo = 0
    while lo < len(params_list):
        hi, total = lo, 0
        while hi < len(params_list) and (hi == lo or total + counts[hi] <= _EXACT_POINTS):
            total += counts[hi]
            hi += 1
        rows = [v for v in range(lo, hi) if counts[v]]
        if rows:
            q_s, s_s = solve_positions_stacked(
                [params_list[v] for v in rows], [pts[unsettled[v]] for v in rows],
                posture=options["posture"], tolerance_m=options["tol"],
                max_iterations=options["iters"], table_size=options["table_size"])
            sel = unsettled[rows]
            block_q, block_s = q[rows], status[rows]
            block_q[sel], block_s[sel] = q_s, s_s
            q[rows], status[rows] = block_q, block_s
        lo = hi


def _score_chunk(items, q, status, region, accel, stiffness):
    """Score rows of variants ``items`` from their solutions q (V, P, n), status (V, P): every
    metric in one batched pass over all their solved points (one arm per configuration),
    sharing the task terms (frames, Jacobian, mass matrix, mobility) between the scores."""
    params_list = [p for _, _, p in items]
    count, n = q.shape[1:]
    ok = np.isin(status, SOLVED).reshape(-1)
    flat_q = q.reshape(-1, n)
    rated = bool(np.any(np.isfinite(params_list[0].peak_torque)))   # shared within a run
    values = {"isotropy": np.full(ok.size, np.nan), "mass_ratio": np.full(ok.size, np.nan)}
    if rated:
        values.update(min_margin=np.full(ok.size, np.nan), limiting_joint=np.full(ok.size, -1),
                      accel_capability=np.full(ok.size, np.nan))
    index = np.flatnonzero(ok)
    stacked = stack_params(params_list)
    if index.size:
        params_ok = _take(stacked, index // count, params_list[0])
        terms = _metrics.task_terms(params_ok, flat_q[index].T)
        values["isotropy"][index] = _metrics.isotropy_index(params_ok, terms)
        values["mass_ratio"][index] = _metrics.mass_ratio(params_ok, terms)
        if rated:
            head = _metrics.torque_headroom(params_ok, terms, accel)
            values["min_margin"][index] = head.min_margin
            values["limiting_joint"][index] = head.limiting_joint
            values["accel_capability"][index] = _metrics.acceleration_capability(params_ok, terms)
        if stiffness:
            _stiffness_values(params_ok, terms, accel, values, ok, _SCORED)
    elif stiffness:
        _stiffness_values(stacked, None, accel, values, ok, _SCORED)
    rows = []
    for v, (_, vspec, params) in enumerate(items):
        part = slice(v * count, (v + 1) * count)
        arrays = {name: arr[part] for name, arr in values.items()}
        arrays["status"] = status[v]
        attrs = {"design": vspec["name"], "cell_measure": region.cell_measure,
                 "moving_mass_kg": float(np.sum(params.body_mass))}    # as Arm.moving_mass
        rows.append(scores_from_arrays(arrays, attrs, [j["name"] for j in vspec["joints"]]))
    return rows
