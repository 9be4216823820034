"""Status codes of inverse-kinematics solutions (private; re-exported by ``_ik``)."""

__all__ = ["STATUS", "SOLVED", "OK", "OUT_OF_REACH", "BEYOND_LIMITS", "NOT_CONVERGED",
           "OFF_PLANE", "NO_POSTURE", "SEAM"]

#: Status codes of solved points, and what they mean. 0 and 6 are solved points (``q`` is
#: given); the others are not solved (``q`` is NaN).
#:
#: - ``ok``: solved on the requested branch;
#: - ``out_of_reach``: no configuration puts the tool point there;
#: - ``beyond_joint_limits``: configurations exist, all outside the joint limits;
#: - ``not_converged``: the numeric solver found no solution (none is known to exist);
#: - ``off_task_plane``: a planar arm's target off its plane;
#: - ``posture_unavailable``: solutions within the limits exist, none on the requested branch;
#: - ``branch_seam``: solved on the requested branch, but the solution of a neighbouring grid
#:   point differs by more than ``JUMP_RAD`` (0.5 rad): the arm cannot keep one continuous
#:   solution across there (a joint limit or a singular boundary lies between); the map has
#:   a seam at this point.
STATUS = {
    0: "ok",
    1: "out_of_reach",
    2: "beyond_joint_limits",
    3: "not_converged",
    4: "off_task_plane",
    5: "posture_unavailable",
    6: "branch_seam",
}
OK, OUT_OF_REACH, BEYOND_LIMITS, NOT_CONVERGED, OFF_PLANE, NO_POSTURE, SEAM = range(7)

#: The codes of points that carry a solution.
SOLVED = (OK, SEAM)
