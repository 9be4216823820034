"""Core: pure array kernels of the arm model (private layer; the public names live in the package).

Holds kinematics, dynamics (mass matrix, gravity and velocity torques, inverse dynamics), the
inertia-metric kernels and their public wrappers (``_api``), the batch-last small-matrix kernels
and the layout conversion at the public boundary.

May import: numpy and itself only. Never imports ``model``, ``studies``, ``plots``, ``widgets`` or
``review``: its functions take the validated parameter arrays (``ArmParams``) or any object with
the arm's methods, so they can be tested and profiled alone.
"""
