"""The arm: an immutable, validated design with its dynamics (private; see ``ir.Arm``)."""

import copy

import numpy as np

from ..core import _dynamics, _kinematics
from ..core._args import check_q
from ..core._layout import from_core, to_core
from ._design import normalise_design
from ._errors import DesignError
from ._params import build_params

__all__ = ["Arm"]

_TASK_EXTRAS = ("region", "accel_mps2", "payload_kg", "approach")

_CHECK_SEED = 20261202


def _check_mass_matrix(params, spec):
    """Raise DesignError naming the joint if M(q) is singular at every sampled q."""
    rng = np.random.default_rng(_CHECK_SEED)
    q = rng.uniform(-np.pi, np.pi, size=(params.n, 4))
    mass = np.moveaxis(_dynamics.mass_matrix(params, _kinematics.forward(params, q)), -1, 0)
    eig = np.linalg.eigvalsh(mass)
    scale = np.maximum(eig[:, -1], 1e-300)
    if not np.all(eig[:, 0] <= 1e-12 * scale):
        return
    diag = np.einsum("...ii->...i", mass)
    problems = []
    for j in range(params.n):
        if np.all(diag[:, j] <= 1e-12 * scale):
            problems.append((f"joints[{j}]", f"joint '{spec['joints'][j]['name']}' moves no mass "
                             "and no rotor inertia, so the mass matrix would be singular (give an "
                             "outboard link mass or inertia, or the actuator a rotor inertia)"))
    if not problems:
        _, vec = np.linalg.eigh(mass[0])
        j = int(np.argmax(np.abs(vec[:, 0])))
        problems.append((f"joints[{j}]", f"joint '{spec['joints'][j]['name']}' adds no motion of "
                         "its own (its motion duplicates other joints', e.g. coincident axes with "
                         "the outboard mass on them), so the mass matrix would be singular"))
    raise DesignError(spec["name"], problems)


class Arm:
    """A validated serial arm of revolute joints (arm-model.md).

    Do not call ``Arm(...)`` directly: use :func:`inertia_review.load_design`,
    :meth:`Arm.from_dict` or a builder such as :func:`inertia_review.planar_chain`.
    All methods take joint angles ``q`` of shape (..., n) [rad] and broadcast over
    the leading axes; a 1-D ``q`` gives unbatched results.
    """

    __slots__ = ("_spec", "_params", "_task")

    def __init__(self, spec, params, task=None):
        self._spec = spec
        self._params = params
        self._task = task

    @classmethod
    def from_dict(cls, data, *, default_name="unnamed"):
        """Validate a design mapping of the file schema and build the arm.

        Raises
        ------
        DesignError
            Listing every problem with its field path.
        """
        spec = normalise_design(data, default_name=default_name)
        params = build_params(spec)
        _check_mass_matrix(params, spec)
        task = None
        raw_task = spec.get("task", {})
        if any(key in raw_task for key in _TASK_EXTRAS):
            from ._regions import task_from_dict
            extras = {k: raw_task[k] for k in _TASK_EXTRAS if k in raw_task}
            task = task_from_dict(extras, default_axes=params.task_axes.tolist(), name=spec["name"])
            spec["task"] = {**{k: v for k, v in raw_task.items() if k == "axes"}, **task.to_dict()}
        return cls(spec, params, task)

    def to_dict(self):
        """Normalised full form: defaults filled in, axes unit length, angles in degrees."""
        return copy.deepcopy(self._spec)

    def with_values(self, values):
        """A new arm with design values changed, e.g. ``{"joints[1].link.mass_kg": 1.5}``.

        Keys are parameter paths (see :func:`inertia_review.parameter_paths`); the result is
        validated like a design file.
        """
        from ._paths import apply_values
        return type(self).from_dict(apply_values(self._spec, values))

    @property
    def task(self):
        """The design's task (region, required acceleration, payload, approach), or None."""
        return self._task

    # ----------------------------------------------------------------- properties
    @property
    def name(self):
        """Design name."""
        return self._spec["name"]

    @property
    def dof(self):
        """Number of joints n."""
        return self._params.n

    @property
    def joint_names(self):
        """Joint names, base to tip."""
        return tuple(j["name"] for j in self._spec["joints"])

    @property
    def task_axes(self):
        """(k, 3) orthonormal rows in W: the directions the tool point is meant to move in."""
        return self._params.task_axes.copy()

    @property
    def gravity(self):
        """Gravity vector in W, (3,) [m/s^2]."""
        return self._params.gravity.copy()

    @property
    def joint_limits(self):
        """Joint limits, (n, 2) [rad]."""
        return self._params.limits.copy()

    @property
    def peak_torque(self):
        """Peak torque ratings (n,) [N m]; NaN where a joint has no rating."""
        return self._params.peak_torque.copy()

    @property
    def continuous_torque(self):
        """Continuous torque ratings (n,) [N m]; NaN where a joint has no rating."""
        return self._params.continuous_torque.copy()

    @property
    def moving_mass(self):
        """Total moving mass [kg]: every link body, point mass and the payload."""
        return float(np.sum(self._params.body_mass))

    def __repr__(self):
        return f"<Arm '{self.name}': {self.dof} joints ({', '.join(self.joint_names)})>"

    # ----------------------------------------------------------------- core
    def _q(self, q, name="q"):
        return check_q(q, self._params.n, self.name, name)

    def _frames(self, q):
        (qc,), batch = to_core(self._q(q))
        return _kinematics.forward(self._params, qc), batch

    def tool_position(self, q):
        """Tool point in W, (..., 3) [m]."""
        frames, batch = self._frames(q)
        return from_core(frames.tool + self._params.mount_position[:, None], batch)

    def link_frames(self, q):
        """Joint origins in W (..., n, 3) [m] and link rotations (..., n, 3, 3), for drawing."""
        frames, batch = self._frames(q)
        origin = frames.origin + self._params.mount_position[:, None]
        return from_core(origin, batch), from_core(frames.rotation, batch)

    def jacobian(self, q):
        """Tool-point Jacobian (..., 6, n): rows 0-2 linear velocity [m/s per rad/s] in W,
        rows 3-5 the last link's angular velocity in W."""
        frames, batch = self._frames(q)
        return from_core(_kinematics.jacobian(frames), batch)

    def mass_matrix(self, q):
        """Joint-space mass matrix (..., n, n) [kg m^2], payload and reflected rotor
        inertia included."""
        frames, batch = self._frames(q)
        return from_core(_dynamics.mass_matrix(self._params, frames), batch)

    def gravity_torque(self, q):
        """Joint torques that hold the arm still, (..., n) [N m]."""
        frames, batch = self._frames(q)
        return from_core(_dynamics.gravity_torque(self._params, frames), batch)

    def velocity_torque(self, q, qd):
        """Coriolis and centrifugal torques C(q, qd) qd, (..., n) [N m]; qd in [rad/s].

        q and qd broadcast over leading axes.
        """
        (qc, qdc), batch = to_core(self._q(q), self._q(qd, "qd"))
        frames = _kinematics.forward(self._params, qc)
        tau = _dynamics.inverse_dynamics(self._params, frames, qdc, np.zeros_like(qdc),
                                         gravity=False)
        return from_core(tau, batch)

    def inverse_dynamics(self, q, qd, qdd):
        """Joint torques M qdd + C(q, qd) qd + g(q), (..., n) [N m].

        qd [rad/s] and qdd [rad/s^2] broadcast with q over leading axes.
        """
        (qc, qdc, qddc), batch = to_core(self._q(q), self._q(qd, "qd"), self._q(qdd, "qdd"))
        frames = _kinematics.forward(self._params, qc)
        return from_core(_dynamics.inverse_dynamics(self._params, frames, qdc, qddc), batch)
