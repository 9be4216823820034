"""Independent symbolic reference model of an arm design (sympy, Lagrange).

This module is an outside check for the ``inertia_review`` core and must never
import it. From a design dict in the schema of
``/work/shared/design/arm-model.md`` it builds the forward kinematics with
sympy, writes the kinetic energy ``T`` and the potential energy ``V`` of every
body, and derives from them, by Lagrange's equations,

- the mass matrix ``M = d^2 T / d qd d qd`` (Hessian of T in the joint rates),
- the gravity torque ``G = dV/dq``,
- the velocity (Coriolis and centrifugal) torque
  ``C(q, qd) qd = d/dt(dT/dqd) - dT/dq - M qdd``, evaluated with ``qdd = 0`` by
  the chain rule ``d/dt f(q, qd) = sum_k (df/dq_k) qd_k + (df/dqd_k) qdd_k``,
- the tool-point Jacobian ``d p_tool / dq`` and the angular-velocity Jacobian
  of the last link, read from ``skew(w) = Rdot R^T``.

Conventions (all from arm-model.md, re-implemented here from the text):

- mount and joint frames: ``Trans(xyz_m) Rot(rpy_deg)``, with
  ``Rot(rpy) = Rz(yaw) Ry(pitch) Rx(roll)`` and ``rpy_deg = [roll, pitch,
  yaw]``; joint i then turns by ``q_i`` about its unit ``axis`` (Rodrigues'
  formula ``R = cos q I + sin q [a]x + (1 - cos q) a a^T``);
- link inertia ``[Ixx, Iyy, Izz, Ixy, Ixz, Iyz]`` are the tensor's own entries
  about the link COM in the link frame; point masses carry no rotational
  inertia; the payload is a point mass at the tool point plus
  ``payload_inertia_kgm2`` about the tool point in the last link frame;
- the reflected rotor inertia ``gear_ratio^2 rotor_inertia_kgm2`` enters as the
  kinetic energy ``1/2 gear_ratio^2 J_rotor qd_i^2`` (so it adds to ``M_ii``
  only and has no gyroscopic coupling);
- gravity ``(0, 0, -9.80665)`` m/s^2 (standard gravity, CGPM 1901) unless
  ``mount.gravity_mps2`` overrides it; ``V = -sum_b m_b g . c_b``.

Only the joint angles ``q_i`` and the rates ``qd_i`` are sympy symbols: every
design number becomes a sympy ``Float`` before any expression is built, and no
expression is ever passed to ``sympy.simplify``.

How the derivatives stay cheap. ``sympy.diff`` walks expression *trees*; the
forward kinematics of a chain is a deeply nested product whose tree grows
geometrically with the number of joints, so differentiating it as one
expression takes minutes already for four joints. Instead every intermediate
quantity (each entry of R_i and p_i, each body position, velocity, angular
velocity, ...) gets a name: a plain sympy Symbol with a small defining
expression in q, qd and earlier names. A total derivative is the derivative of
the small defining expression plus the chain rule through the names it uses
(forward mode), and derivatives are named in turn, so second derivatives work
the same way. The derivative of one small expression is taken by a short
product/chain rule over sympy's Add/Mul/Pow/cos/sin (``_partial``), or by
``sympy.diff`` itself with ``SymbolicArm(..., use_sympy_diff=True)``; both give
the same expressions (a test compares them). The kinetic and potential
energies are written in these names and qd, and Lagrange's equations are
applied to them exactly as stated above.

For numeric evaluation the names become the assignments of the generated code:
``sympy.lambdify(..., "numpy", cse=...)`` receives, as its common
subexpressions, the named definitions the result needs followed by
``sympy.cse`` of the final expressions, so the generated code keeps the
derivation's own sharing. The functions are built once per design and reused
for every configuration.

Public entry points
-------------------
``SymbolicArm(design)``
    The derivation; ``.evaluate(q, qd=None, qdd=None)`` gives every quantity
    numerically at a (batch of) configuration(s).
``reference_values(design, q, qd=None, qdd=None)``
    Shortcut for ``SymbolicArm(design).evaluate(...)``.
``closed_form_functions(design)``
    ``(mass_matrix, jacobian)``: numpy-callable closed forms ``q (..., n) ->
    (..., n, n)`` and ``(..., 6, n)``, the "hand-rolled closed form" baseline.
"""

from __future__ import annotations

import inspect
import itertools
import math
import time
from typing import Callable, NamedTuple

import numpy as np
import sympy as sp
from sympy.printing.numpy import NumPyPrinter

# sympy >= 1.13 renders the expression into the docstring unless told not to (slow for big ones)
_LAMBDIFY_HAS_DOCSTRING_LIMIT = "docstring_limit" in inspect.signature(sp.lambdify).parameters

# Standard gravity g_n = 9.80665 m/s^2, exact by definition
# (source: 3rd CGPM 1901, Comptes Rendus p. 70; references.md item 7 [C]).
STANDARD_GRAVITY_MPS2 = (0.0, 0.0, -9.80665)

__all__ = [
    "SymbolicArm",
    "ReferenceValues",
    "ClosedFormFunctions",
    "reference_values",
    "closed_form_functions",
]


# ---------------------------------------------------------------------------
# constants: design numbers -> sympy Float matrices (no symbols involved)
# ---------------------------------------------------------------------------
def _num(x) -> sp.Float:
    return sp.Float(float(x))


def _vec3(values) -> sp.Matrix:
    values = list(values)
    if len(values) != 3:
        raise ValueError(f"expected 3 numbers, got {values!r}")
    return sp.Matrix([_num(v) for v in values])


def _rot_x(angle_rad: float) -> sp.Matrix:
    c, s = _num(math.cos(angle_rad)), _num(math.sin(angle_rad))
    return sp.Matrix([[1, 0, 0], [0, c, -s], [0, s, c]])


def _rot_y(angle_rad: float) -> sp.Matrix:
    c, s = _num(math.cos(angle_rad)), _num(math.sin(angle_rad))
    return sp.Matrix([[c, 0, s], [0, 1, 0], [-s, 0, c]])


def _rot_z(angle_rad: float) -> sp.Matrix:
    c, s = _num(math.cos(angle_rad)), _num(math.sin(angle_rad))
    return sp.Matrix([[c, -s, 0], [s, c, 0], [0, 0, 1]])


def rpy_matrix(rpy_deg) -> sp.Matrix:
    """Fixed-axis X-Y-Z rotation Rz(yaw) Ry(pitch) Rx(roll), rpy = [roll, pitch, yaw] in degrees."""
    roll, pitch, yaw = (math.radians(float(a)) for a in rpy_deg)
    return _rot_z(yaw) * _rot_y(pitch) * _rot_x(roll)


def _inertia_matrix(entries) -> sp.Matrix:
    """[Ixx, Iyy, Izz, Ixy, Ixz, Iyz] (tensor entries) -> symmetric 3x3 sympy matrix."""
    entries = [_num(v) for v in entries]
    if len(entries) != 6:
        raise ValueError(f"inertia needs 6 entries [Ixx, Iyy, Izz, Ixy, Ixz, Iyz], got {entries!r}")
    ixx, iyy, izz, ixy, ixz, iyz = entries
    return sp.Matrix([[ixx, ixy, ixz], [ixy, iyy, iyz], [ixz, iyz, izz]])


def _axis_rotation(axis: sp.Matrix, q: sp.Symbol) -> sp.Matrix:
    """Rodrigues' formula R = a a^T + cos q (I - a a^T) + sin q [a]x, entry by entry."""
    ax, ay, az = axis
    outer = axis * axis.T
    cross = sp.Matrix([[0, -az, ay], [az, 0, -ax], [-ay, ax, 0]])
    c, s = sp.cos(q), sp.sin(q)
    rows = []
    for r in range(3):
        row = []
        for k in range(3):
            delta = 1 if r == k else 0
            row.append(outer[r, k] + (delta - outer[r, k]) * c + cross[r, k] * s)
        rows.append(row)
    return sp.Matrix(rows)


def _mm(a: sp.Matrix, b: sp.Matrix) -> sp.Matrix:
    """Matrix product by plain sums (sympy's generic Matrix product is slower for these entries)."""
    return sp.Matrix(a.rows, b.cols,
                     lambda i, j: sp.Add(*[a[i, k] * b[k, j] for k in range(a.cols)]))


def _vee(skew: sp.Matrix) -> sp.Matrix:
    """(w_x, w_y, w_z) from a skew-symmetric matrix [w]x (read from its lower triangle)."""
    return sp.Matrix([skew[2, 1], skew[0, 2], skew[1, 0]])


# Densities [kg/m^3] of the design-file materials (references.md item 7 [C]):
# aluminium 6061 2700 (Aluminum Association typical values; Gere, Mechanics of Materials 5th ed.),
# structural steel 7850 (EN 1993-1-1:2005 3.2.6), CFRP 1700 (Callister & Rethwisch, 3rd ed.,
# Table B.1).
TUBE_DENSITIES_KGM3 = {"aluminium_6061": 2700.0, "structural_steel": 7850.0, "cfrp": 1700.0}


def _tube_body(tube: dict):
    """Mass, COM and COM inertia of a tube along +x of the link frame from its origin.

    m = rho pi (R^2 - r^2) L, COM at (L/2, 0, 0); about the COM the axial moment is
    m (R^2 + r^2)/2 and the transverse moments m [(R^2 + r^2)/4 + L^2/12]
    (source: Machinery's Handbook, 31st ed., "Radius of Gyration", hollow cylinder;
    references.md item 7 [C]).
    """
    length = _num(tube["length_m"])
    big_r = _num(tube["outer_diameter_m"]) / 2
    small_r = big_r - _num(tube["wall_m"])
    if "density_kgm3" in tube:
        rho = _num(tube["density_kgm3"])
    else:
        rho = _num(TUBE_DENSITIES_KGM3[tube["material"]])
    mass = rho * sp.pi.evalf() * (big_r**2 - small_r**2) * length
    axial = mass * (big_r**2 + small_r**2) / 2
    transverse = mass * ((big_r**2 + small_r**2) / 4 + length**2 / 12)
    com = sp.Matrix([length / 2, 0, 0])
    return mass, com, sp.diag(axial, transverse, transverse)


class _Body(NamedTuple):
    label: str
    frame: int  # link index 1..n whose frame carries the body
    mass: sp.Float
    com: sp.Matrix  # (3, 1) in the link frame
    inertia: sp.Matrix | None  # 3x3 about the COM in the link frame, or None (point mass)


class ReferenceValues(NamedTuple):
    """Numeric reference results; leading axes are the broadcast batch of q, qd, qdd."""

    tool_position: np.ndarray  # (..., 3) [m]
    jacobian: np.ndarray  # (..., 6, n): rows 0-2 tool linear [m/rad], rows 3-5 last link angular [1]
    mass_matrix: np.ndarray  # (..., n, n) [kg m^2]
    gravity_torque: np.ndarray  # (..., n) [N m]
    velocity_torque: np.ndarray | None  # (..., n) [N m], None when qd is not given
    inverse_dynamics: np.ndarray | None  # (..., n) [N m], None when qd or qdd is not given


class ClosedFormFunctions(NamedTuple):
    """Numpy closed forms made by sympy.lambdify (cse: named definitions + sympy.cse); q is (..., n)."""

    mass_matrix: Callable[[np.ndarray], np.ndarray]  # -> (..., n, n)
    jacobian: Callable[[np.ndarray], np.ndarray]  # -> (..., 6, n)


# ---------------------------------------------------------------------------
# named intermediate quantities and their total derivatives
# ---------------------------------------------------------------------------
def _partial(expr, s):
    """d expr / d s for the expression kinds built here (sums, products, integer powers,
    cos, sin, numbers and symbols); a thin product/chain rule over sympy's own Add and Mul,
    used instead of sympy.diff, whose general machinery dominates the run time."""
    if expr == s:
        return sp.S.One
    if expr.is_Atom:
        return sp.S.Zero
    if expr.is_Add:
        return sp.Add(*[_partial(a, s) for a in expr.args])
    if expr.is_Mul:
        args = expr.args
        terms = []
        for i, a in enumerate(args):
            da = _partial(a, s)
            if da != 0:
                terms.append(sp.Mul(*args[:i], da, *args[i + 1:]))
        return sp.Add(*terms)
    if expr.is_Pow:
        base, exp = expr.args
        if not exp.is_Integer:
            raise NotImplementedError(f"power {expr}")
        db = _partial(base, s)
        return exp * base ** (exp - 1) * db if db != 0 else sp.S.Zero
    if isinstance(expr, sp.cos):
        da = _partial(expr.args[0], s)
        return -sp.sin(expr.args[0]) * da if da != 0 else sp.S.Zero
    if isinstance(expr, sp.sin):
        da = _partial(expr.args[0], s)
        return sp.cos(expr.args[0]) * da if da != 0 else sp.S.Zero
    raise NotImplementedError(f"no derivative rule for {type(expr).__name__}")


class _Program:
    """Straight-line program: named quantities (Symbol -> defining expression).

    ``define`` names an expression. Two derivative operators act on any
    expression in the variables (q, qd) and the names:

    ``diff(expr, x)``
        total partial derivative for x = q_k or qd_k: the explicit sympy diff
        plus, for every name s in expr, (d expr / d s) * (d s / d x);
    ``ddt(expr)``
        total time derivative along a motion with qdot = qd and qdd = 0:
        sum_k (d expr / d q_k) qd_k, again through the names.

    Derivatives of names are named in turn (memoised), so expressions stay
    small and derivatives of any order are available. A name r created as the
    time derivative of a name s uses the two exact identities (qd does not
    depend on q; qdd = 0):

        d r / d q_i  = ddt(d s / d q_i),
        d r / d qd_j = d s / d q_j + ddt(d s / d qd_j),

    which keeps second derivatives at O(n) names per quantity instead of O(n^2).
    """

    def __init__(self, q, qd, partial=None):
        self.q, self.qd = tuple(q), tuple(qd)
        self._partial = partial or _partial
        self._q_set = frozenset(self.q)
        self._qd_index = {v: j for j, v in enumerate(self.qd)}
        self.defs: dict[sp.Symbol, sp.Expr] = {}
        self.index: dict[sp.Symbol, int] = {}
        self.deps: dict[sp.Symbol, frozenset] = {}  # the variables each name depends on
        self.rate_of: dict[sp.Symbol, sp.Symbol] = {}  # r -> s where r = ddt(s)
        self._memo: dict = {}
        self._counter = itertools.count()

    def define(self, expr, tag: str = "v", rate_of=None):
        expr = sp.sympify(expr)
        if expr.is_Atom:  # numbers, variables and names need no new name
            return expr
        k = next(self._counter)
        sym = sp.Symbol(f"{tag}_{k}")  # no assumptions: they cost time in Mul/Add
        self.deps[sym] = self._depends_on(expr)
        self.defs[sym] = expr
        self.index[sym] = k
        if rate_of is not None:
            self.rate_of[sym] = rate_of
        return sym

    def _depends_on(self, expr):
        out = set()
        for s in expr.free_symbols:
            out.update(self.deps[s] if s in self.defs else (s,))
        return frozenset(out)

    def _names_in(self, expr, wanted):
        """Names in expr that depend on some variable in ``wanted``, in definition order."""
        found = (s for s in expr.free_symbols
                 if s in self.defs and not self.deps[s].isdisjoint(wanted))
        return sorted(found, key=self.index.__getitem__)

    def diff(self, expr, var):
        """Total partial derivative of expr with respect to the variable var (a q_k or qd_k)."""
        expr = sp.sympify(expr)
        terms = [self._partial(expr, var)] if var in expr.free_symbols else []
        for sym in self._names_in(expr, (var,)):
            dsym = self._diff_named(sym, var)
            if dsym != 0:
                terms.append(self._partial(expr, sym) * dsym)
        return sp.Add(*terms)

    def ddt(self, expr):
        """Time derivative of expr along qdot = qd, qdd = 0: sum_k (d expr/d q_k) qd_k."""
        expr = sp.sympify(expr)
        free = expr.free_symbols
        terms = [self._partial(expr, qk) * qdk for qk, qdk in zip(self.q, self.qd) if qk in free]
        for sym in self._names_in(expr, self._q_set):
            dsym = self._ddt_named(sym)
            if dsym != 0:
                terms.append(self._partial(expr, sym) * dsym)
        return sp.Add(*terms)

    def _diff_named(self, sym, var):
        if var not in self.deps[sym]:
            return sp.S.Zero
        key = (sym, var)
        if key not in self._memo:
            base = self.rate_of.get(sym)
            if base is None:
                d = self.diff(self.defs[sym], var)
            elif var in self._q_set:
                d = self.ddt(self.diff(base, var))
            else:
                d = self.diff(base, self.q[self._qd_index[var]]) + self.ddt(self.diff(base, var))
            self._memo[key] = self.define(d, "d") if d != 0 else sp.S.Zero
        return self._memo[key]

    def _ddt_named(self, sym):
        if self.deps[sym].isdisjoint(self._q_set):
            return sp.S.Zero
        key = (sym, "t")
        if key not in self._memo:
            d = self.ddt(self.defs[sym])
            self._memo[key] = self.define(d, "dt", rate_of=sym) if d != 0 else sp.S.Zero
        return self._memo[key]

    def closure(self, exprs):
        """(symbol, definition) pairs needed by exprs, in definition order."""
        needed: set = set()
        stack = [s for e in exprs for s in sp.sympify(e).free_symbols if s in self.defs]
        while stack:
            s = stack.pop()
            if s in needed:
                continue
            needed.add(s)
            stack.extend(t for t in self.defs[s].free_symbols if t in self.defs)
        return [(s, self.defs[s]) for s in sorted(needed, key=self.index.__getitem__)]

    def lambdify(self, args, exprs):
        """Numpy function of args for the list exprs.

        ``sympy.lambdify(..., "numpy", cse=program_cse)``: the common subexpressions
        handed to lambdify are the named definitions the result needs (in definition
        order) followed by ``sympy.cse`` of the final expressions. Plain ``cse=True``
        would first need the names expanded back into nested expressions and then
        rediscover their sharing; tried on a random six-joint arm, building M alone
        took minutes, against seconds here.
        """
        exprs = [sp.sympify(e) for e in exprs]

        def program_cse(final_exprs):
            final_exprs = list(final_exprs)
            pre = self.closure(final_exprs)
            repl, reduced = sp.cse(final_exprs, symbols=sp.numbered_symbols("x_"))
            return pre + list(repl), reduced

        # order="none": print sums in their stored order (sorting terms is slow and
        # changes nothing numerically that matters at 1e-9).
        printer = NumPyPrinter({"fully_qualified_modules": False, "inline": True,
                                "allow_unknown_functions": True, "user_functions": {},
                                "order": "none"})
        extra = {"docstring_limit": 0} if _LAMBDIFY_HAS_DOCSTRING_LIMIT else {}
        return sp.lambdify(list(args), exprs, modules="numpy", cse=program_cse,
                           printer=printer, **extra)


def _array_function(program, symbols, exprs, out_shape):
    """Wrap program.lambdify into f(*columns) -> float array of shape (..., *out_shape).

    Entries that do not depend on the arguments come back from lambdify as
    scalars; assigning into a preallocated array broadcasts them to the batch.
    """
    flat = list(exprs)
    fn = program.lambdify(symbols, flat)

    def call(*columns):
        columns = [np.asarray(c, dtype=float) for c in columns]
        batch = np.broadcast_shapes(*(c.shape for c in columns)) if columns else ()
        values = fn(*columns)
        out = np.empty(batch + (len(flat),), dtype=float)
        for k, v in enumerate(values):
            out[..., k] = v
        return out.reshape(batch + tuple(out_shape))

    return call


# ---------------------------------------------------------------------------
# the derivation
# ---------------------------------------------------------------------------
class SymbolicArm:
    """Symbolic kinematics, energies and Lagrange equations of one design dict.

    Parameters
    ----------
    design : dict
        Design in the schema of arm-model.md (the same dict that would be given
        to the package's ``Arm.from_dict``). Links may be given as
        mass_kg / com_m / inertia_kgm2 or as a ``tube`` (handbook formulas).
    use_sympy_diff : bool, default False
        Differentiate the small defining expressions with ``sympy.diff``
        instead of the module's product/chain rule ``_partial`` (same results,
        about three times slower; kept so that the two can be compared).

    Attributes
    ----------
    n : int
        Number of joints.
    q, qd : tuple of sympy.Symbol
        Joint angles [rad] and rates [rad/s].
    """

    def __init__(self, design: dict, *, use_sympy_diff: bool = False):
        joints = design.get("joints") or []
        if not joints:
            raise ValueError("design needs at least one joint")
        self.n = n = len(joints)
        self.q = sp.symbols(f"q1:{n + 1}")
        self.qd = sp.symbols(f"qd1:{n + 1}")
        self.program = prog = _Program(
            self.q, self.qd, partial=(lambda e, v: e.diff(v)) if use_sympy_diff else None)
        mount = design.get("mount", {}) or {}
        self.gravity = _vec3(mount.get("gravity_mps2", STANDARD_GRAVITY_MPS2))

        # --- forward kinematics: frame i = link i in W, frame 0 = the base ------
        rot = rpy_matrix(mount.get("rpy_deg", (0.0, 0.0, 0.0)))
        org = _vec3(mount.get("xyz_m", (0.0, 0.0, 0.0)))
        rotations = [rot]
        origins = [org]
        self._reflected = []  # gear_ratio^2 * rotor inertia per joint
        bodies: list[_Body] = []
        for i, joint in enumerate(joints, start=1):
            axis = _vec3(joint["axis"])
            axis = axis / sp.sqrt(sum(a * a for a in axis))
            fixed = rpy_matrix(joint.get("rpy_deg", (0.0, 0.0, 0.0)))
            offset = _vec3(joint.get("xyz_m", (0.0, 0.0, 0.0)))
            # joint origin: p_i = p_{i-1} + R_{i-1} xyz_m ; R_i = R_{i-1} Rot(rpy) Rot(axis, q_i)
            org = (org + _mm(rot, offset)).applyfunc(lambda e: prog.define(e, "p"))
            # entries of turn are small: a + b cos q + c sin q
            turn = _mm(fixed, _axis_rotation(axis, self.q[i - 1]))
            rot = _mm(rot, turn).applyfunc(lambda e: prog.define(e, "R"))
            origins.append(org)
            rotations.append(rot)
            link = joint["link"]
            if "tube" in link:
                mass, com, inertia = _tube_body(link["tube"])
            else:
                mass, com = _num(link["mass_kg"]), _vec3(link["com_m"])
                inertia = _inertia_matrix(link["inertia_kgm2"])
            bodies.append(_Body(f"link{i}", i, mass, com, inertia))
            for k, pm in enumerate(link.get("point_masses", []) or []):
                bodies.append(_Body(f"link{i}.point_masses[{k}]", i, _num(pm["mass_kg"]),
                                    _vec3(pm["xyz_m"]), None))
            act = joint.get("actuator") or {}
            gear = _num(act.get("gear_ratio", 1.0))
            rotor = _num(act.get("rotor_inertia_kgm2", 0.0))
            self._reflected.append(gear * gear * rotor)

        tool = design.get("tool", {}) or {}
        tool_local = _vec3(tool.get("xyz_m", (0.0, 0.0, 0.0)))
        payload = _num(tool.get("payload_kg", 0.0))
        payload_inertia = _inertia_matrix(tool.get("payload_inertia_kgm2", (0.0,) * 6))
        if payload != 0 or any(e != 0 for e in payload_inertia):
            bodies.append(_Body("payload", n, payload, tool_local, payload_inertia))

        self.rotations = rotations
        self.origins = origins
        self.bodies = bodies
        self.tool_position = (origins[n] + _mm(rotations[n], tool_local)).applyfunc(
            lambda e: prog.define(e, "tool"))
        self.body_positions = [
            (origins[b.frame] + _mm(rotations[b.frame], b.com)).applyfunc(lambda e: prog.define(e, "c"))
            for b in bodies
        ]
        self._cache: dict = {}

    # --- kinematics --------------------------------------------------------
    def _time_derivative(self, matrix: sp.Matrix) -> sp.Matrix:
        """d/dt of a matrix of named quantities in q: sum_j (d/dq_j) * qd_j (chain rule)."""
        return matrix.applyfunc(self.program.ddt)

    def jacobian_expr(self) -> sp.Matrix:
        """6 x n: rows 0-2 d p_tool / dq, rows 3-5 from skew(w) = Rdot R^T of the last link."""
        if "jacobian" not in self._cache:
            prog = self.program
            r = self.rotations[self.n]
            cols = []
            for qj in self.q:
                lin = [prog.diff(e, qj) for e in self.tool_position]
                dr = r.applyfunc(lambda e: prog.diff(e, qj))
                ang = list(_vee(_mm(dr, r.T)))
                cols.append(lin + ang)
            self._cache["jacobian"] = sp.Matrix(cols).T
        return self._cache["jacobian"]

    # --- energies ------------------------------------------------------------
    def kinetic_energy_terms(self) -> list:
        """T as a list of terms.

        Per body 1/2 m |v_c|^2 and 1/2 w^T R I R^T w; per rotor 1/2 n^2 J qd_i^2.
        """
        if "T" not in self._cache:
            half = sp.Rational(1, 2)
            terms = []
            rdots = {}
            for body, c in zip(self.bodies, self.body_positions):
                if body.mass != 0:
                    v = self._time_derivative(c)
                    terms.append(half * body.mass * _mm(v.T, v)[0, 0])
                if body.inertia is not None and any(e != 0 for e in body.inertia):
                    r = self.rotations[body.frame]
                    if body.frame not in rdots:
                        rdots[body.frame] = self._time_derivative(r)
                    # skew(R^T w) = R^T skew(w) R = R^T Rdot, so with wb = vee(R^T Rdot)
                    # 1/2 w^T (R I R^T) w = 1/2 wb^T I wb.
                    wb = _vee(_mm(r.T, rdots[body.frame])).applyfunc(
                        lambda e: self.program.define(e, "omega"))
                    terms.append(half * _mm(_mm(wb.T, body.inertia), wb)[0, 0])
            for refl, qdi in zip(self._reflected, self.qd):
                if refl != 0:
                    terms.append(half * refl * qdi**2)
            self._cache["T"] = terms
        return self._cache["T"]

    def potential_energy_terms(self) -> list:
        """V = -sum_b m_b g . c_b, as a list of per-body terms."""
        if "V" not in self._cache:
            self._cache["V"] = [
                -body.mass * _mm(self.gravity.T, c)[0, 0]
                for body, c in zip(self.bodies, self.body_positions) if body.mass != 0
            ]
        return self._cache["V"]

    def momentum_terms(self) -> list:
        """Generalised momenta dT/dqd_i, each as a list of terms."""
        if "p" not in self._cache:
            prog = self.program
            terms = self.kinetic_energy_terms()
            self._cache["p"] = [
                [d for d in (prog.diff(t, qdi) for t in terms) if d != 0] for qdi in self.qd
            ]
        return self._cache["p"]

    # --- Lagrange's equations ------------------------------------------------
    def mass_matrix_expr(self) -> sp.Matrix:
        """M_ij = d^2 T / dqd_i dqd_j (T is quadratic in qd, so M depends on q only)."""
        if "M" not in self._cache:
            prog = self.program
            p = self.momentum_terms()
            n = self.n
            m = sp.zeros(n, n)
            for i in range(n):
                for j in range(i, n):
                    m[i, j] = sp.Add(*[prog.diff(t, self.qd[j]) for t in p[i]])
                    m[j, i] = m[i, j]  # Schwarz: the Hessian is symmetric
            self._cache["M"] = m
        return self._cache["M"]

    def gravity_expr(self) -> sp.Matrix:
        """G_i = dV/dq_i."""
        if "G" not in self._cache:
            prog = self.program
            v = self.potential_energy_terms()
            self._cache["G"] = sp.Matrix([sp.Add(*[prog.diff(t, qi) for t in v]) for qi in self.q])
        return self._cache["G"]

    def velocity_torque_expr(self) -> sp.Matrix:
        """C qd = d/dt(dT/dqd) - dT/dq with qdd = 0: d/dt f = sum_k (df/dq_k) qd_k (+ 0 * qdd)."""
        if "Cqd" not in self._cache:
            prog = self.program
            p = self.momentum_terms()
            t = self.kinetic_energy_terms()
            rows = []
            for i in range(self.n):
                ddt = [prog.ddt(term) for term in p[i]]
                dtdq = [prog.diff(term, self.q[i]) for term in t]
                rows.append(sp.Add(*ddt) - sp.Add(*dtdq))
            self._cache["Cqd"] = sp.Matrix(rows)
        return self._cache["Cqd"]

    # --- numeric evaluation --------------------------------------------------
    def _all_function(self):
        """One generated function of (q, qd) -> (tool, J, M, G, C qd): the names are shared."""
        if "fn_all" not in self._cache:
            n = self.n
            parts = [
                (self.tool_position, (3,)),
                (self.jacobian_expr(), (6, n)),
                (self.mass_matrix_expr(), (n, n)),
                (self.gravity_expr(), (n,)),
                (self.velocity_torque_expr(), (n,)),
            ]
            flat = [e for m, _ in parts for e in m]
            fn = _array_function(self.program, self.q + self.qd, flat, (len(flat),))
            sizes = [int(np.prod(shape)) for _, shape in parts]
            bounds = np.cumsum([0] + sizes)

            def call(qc, qdc):
                out = fn(*qc, *qdc)
                return [out[..., lo:hi].reshape(out.shape[:-1] + shape)
                        for (lo, hi), (_, shape) in zip(zip(bounds[:-1], bounds[1:]), parts)]

            self._cache["fn_all"] = call
        return self._cache["fn_all"]

    def _extra_function(self, which: str):
        key = "fn_" + which
        if key not in self._cache:
            if which == "energy":
                exprs = [sp.Add(*self.kinetic_energy_terms()), sp.Add(*self.potential_energy_terms())]
                fn = _array_function(self.program, self.q + self.qd, exprs, (2,))
            elif which == "rotation":
                fn = _array_function(self.program, self.q, list(self.rotations[self.n]), (3, 3))
            else:  # pragma: no cover - internal misuse
                raise KeyError(which)
            self._cache[key] = fn
        return self._cache[key]

    def energies(self, q, qd):
        """Kinetic and potential energy [J] at (q, qd): array (..., 2) = (T, V)."""
        return self._extra_function("energy")(*self._columns("q", q), *self._columns("qd", qd))

    def last_rotation(self, q):
        """Rotation matrix (..., 3, 3) of the last link frame in W."""
        return self._extra_function("rotation")(*self._columns("q", q))

    def _columns(self, name, x):
        x = np.asarray(x, dtype=float)
        if x.ndim == 0 or x.shape[-1] != self.n:
            raise ValueError(f"expected `{name}` with shape (..., {self.n}), got {x.shape}")
        return [x[..., i] for i in range(self.n)]

    def evaluate(self, q, qd=None, qdd=None) -> ReferenceValues:
        """Every reference quantity at q (..., n); qd, qdd broadcast with q.

        velocity_torque needs qd; inverse_dynamics needs qd and qdd. It is
        Lagrange's equation tau = d/dt(dT/dqd) - dT/dq + dV/dq, whose qdd part
        d(dT/dqd)/dqd . qdd is M qdd, so tau = M qdd + [C qd] + G.
        """
        q = np.asarray(q, dtype=float)
        qc = self._columns("q", q)
        qdc = self._columns("qd", qd) if qd is not None else [np.zeros(q.shape[:-1])] * self.n
        tool, jac, mass, grav, vel = self._all_function()(qc, qdc)
        tau = None
        if qd is None:
            vel = None
        elif qdd is not None:
            qdd = np.asarray(qdd, dtype=float)
            self._columns("qdd", qdd)
            tau = np.einsum("...ij,...j->...i", mass, qdd) + vel + grav
        return ReferenceValues(tool, jac, mass, grav, vel, tau)


def reference_values(design: dict, q, qd=None, qdd=None) -> ReferenceValues:
    """One-shot: SymbolicArm(design).evaluate(q, qd, qdd)."""
    return SymbolicArm(design).evaluate(q, qd, qdd)


def closed_form_functions(design: dict) -> ClosedFormFunctions:
    """Closed-form numpy functions for M(q) and J(q) of one design.

    Derived symbolically as in SymbolicArm (M = Hessian of T in qd, J from the
    tool position and skew(w) = Rdot R^T) and turned into numpy code by
    ``sympy.lambdify(..., "numpy", cse=...)`` (named definitions + sympy.cse).
    Both functions take ``q_batch`` of shape (..., n), e.g. (N, n), and return
    (..., n, n) and (..., 6, n). The wall time of derivation plus code
    generation is stored as the attribute ``derivation_seconds`` on both.
    """
    start = time.perf_counter()
    model = SymbolicArm(design)
    n = model.n
    mass_fn = _array_function(model.program, model.q, model.mass_matrix_expr(), (n, n))
    jac_fn = _array_function(model.program, model.q, model.jacobian_expr(), (6, n))

    def mass_matrix(q_batch):
        """Mass matrix [kg m^2], (..., n, n), of q_batch (..., n) [rad]."""
        return mass_fn(*model._columns("q_batch", q_batch))

    def jacobian(q_batch):
        """Jacobian (..., 6, n) of q_batch (..., n) [rad]: tool linear rows, last-link angular rows."""
        return jac_fn(*model._columns("q_batch", q_batch))

    elapsed = time.perf_counter() - start
    mass_matrix.derivation_seconds = elapsed
    jacobian.derivation_seconds = elapsed
    return ClosedFormFunctions(mass_matrix, jacobian)
