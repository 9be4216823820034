"""Studies: questions asked of designs over many configurations (private layer).

Holds inverse kinematics over task regions, metric maps (xarray), scores, sweeps, motion
profiles and cycle torques, the transient-contact model with its body-region table, contact-speed
maps and checks, and the caution texts every safety-related result carries.

May import: ``core``, ``model`` and itself. Never imports ``plots``, ``widgets`` or ``review``.
"""
