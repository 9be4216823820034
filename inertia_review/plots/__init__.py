"""Plots of inertia_review results (matplotlib only).

Every plot is a plain function on an Axes, ``f(data, *, ax=None, ...)``: it makes
a figure only when ``ax`` is None, never calls ``plt.show()``, and returns its
artists in a small result object. Labels come from the variables' attributes in
screen units (positions in mm, angles in deg, masses in kg). Our look (colours,
font sizes) is applied only while drawing (:func:`plot_style`); importing this
module changes no global matplotlib setting and does not import ``pyplot``.

Maps (from :func:`inertia_review.metric_map`)
    plot_metric_map, plot_ellipse_field, plot_principal_directions,
    plot_small_multiples, plot_difference_map, plot_headroom_map
Sweeps (from :class:`inertia_review.Sweep`)
    plot_tradeoff
Design search and sensitivity (:class:`inertia_review.DesignSearch`,
:func:`inertia_review.one_at_a_time`)
    plot_pareto, plot_tornado
One configuration (Display objects: ``from_arm``, ``plot``, ``update``)
    MassEllipseDisplay, TorqueBarsDisplay
One configuration, stiffness (with the stiffness caution)
    plot_stiffness_ellipse

Apparent-mass ellipses follow Asada's generalized inertia ellipsoid
x^T Lambda x = 1 (semi-axes 1 / sqrt(mass)): short along heavy directions.

Layer rule: plots may import ``core``, ``model`` and ``studies``; never ``widgets`` or ``review``.
"""

from ._cycle_plots import (
                           CycleTorqueArtists,
                           CycleUtilisationArtists,
                           plot_cycle_torques,
                           plot_cycle_utilisation,
)
from ._displays import MassEllipseDisplay, TorqueBarsDisplay
from ._ellipses import (
                           EllipseField,
                           PrincipalArrows,
                           plane_ellipses,
                           plot_ellipse_field,
                           plot_principal_directions,
)
from ._headroom_map import HeadroomArtists, plot_headroom_map
from ._map_plots import (
                           MapArtists,
                           SmallMultiples,
                           plot_difference_map,
                           plot_metric_map,
                           plot_small_multiples,
)
from ._safety_plots import ContactMapArtists, plot_contact_speed_map
from ._search_plots import ParetoArtists, TornadoArtists, plot_pareto, plot_tornado
from ._stiffness_ellipse import StiffnessEllipseArtists, plot_stiffness_ellipse
from ._style import CMAP_DIVERGING, CMAP_SEQUENTIAL, COLORS, plot_style
from ._tradeoff import TradeoffArtists, plot_tradeoff

__all__ = [
    # maps
    "plot_metric_map", "plot_ellipse_field", "plot_principal_directions",
    "plot_small_multiples", "plot_difference_map", "plot_headroom_map",
    # sweeps
    "plot_tradeoff",
    # design search and sensitivity (search results, one-at-a-time tables)
    "plot_pareto", "ParetoArtists", "plot_tornado", "TornadoArtists",
    # move cycles against the actuator ratings
    "plot_cycle_torques", "plot_cycle_utilisation", "CycleTorqueArtists",
    "CycleUtilisationArtists",
    # contact speeds beside people (always with the caution)
    "plot_contact_speed_map", "ContactMapArtists",
    # one configuration: tool stiffness beside the apparent mass (always with the caution)
    "plot_stiffness_ellipse", "StiffnessEllipseArtists",
    # displays
    "MassEllipseDisplay", "TorqueBarsDisplay",
    # result objects
    "MapArtists", "SmallMultiples", "HeadroomArtists", "EllipseField", "PrincipalArrows",
    "TradeoffArtists",
    # geometry and look
    "plane_ellipses", "plot_style", "COLORS", "CMAP_SEQUENTIAL", "CMAP_DIVERGING",
]
