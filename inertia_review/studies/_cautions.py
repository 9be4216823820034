"""Cautions shown beside every torque, acceleration or contact-speed result (private).

Phrased generally (not quoted from any standard); see DEVELOPERS.md before changing.
"""

__all__ = ["TORQUE_CAUTION", "CONTACT_CAUTION", "STIFFNESS_CAUTION"]

TORQUE_CAUTION = (
    "CAUTION: torque margins and acceleration capabilities are design-stage estimates from an "
    "idealised rigid-body model (no friction, compliance, motor thermal limits or control), not a "
    "validation. Inputs (masses, centres of mass, inertias, local g) carry uncertainty: treat small "
    "margins as not acceptable. Static margins do not show safe behaviour on loss of power or brake "
    "failure. The applicable standards (ISO 12100, ISO 10218-1/-2), local regulations and "
    "qualified, licensed engineering practice decide."
)

CONTACT_CAUTION = (
    "CAUTION: permissible contact speeds are design-stage estimates from the transient-contact "
    "model of ISO/TS 15066:2016 Annex A (informative), using the arm's rigid-body apparent mass. "
    "Covered: transient (free, unconstrained) contact of a person with the TOOL POINT only, the "
    "lower of the force and pressure routes for the stated body area and contact area. NOT "
    "covered: contact with other links, joints or the payload's edges away from the tool point; "
    "quasi-static contact (clamping, pinching, trapping), which has lower limits and needs a way "
    "to release the person; sharp edges and points (the model assumes blunt contact); stopping "
    "distances and control behaviour. They are not a validation: contact forces and pressures "
    "must be measured on the finished application (ISO/PAS 5672), after a risk assessment per "
    "ISO 12100 and ISO 10218-2. No transient contact with the skull, forehead or face is "
    "permitted. Local regulations and qualified, licensed practice decide."
)

STIFFNESS_CAUTION = (
    "CAUTION: stiffness, sag, natural frequencies and payload ratings are design-stage estimates "
    "from a linear-elastic model (joint springs and straight Euler-Bernoulli link beams; no joint "
    "play or backlash, no bearing, housing or flange compliance, no control loop, no structure "
    "beyond the model, small deflections). Measure stiffness and vibration on the built arm. They "
    "are not a validation: the applicable standards (ISO 12100, ISO 10218-1/-2), local "
    "regulations and qualified, licensed engineering practice decide."
)
