"""Plots of contact-speed limits, always with their caution text (private)."""

from dataclasses import dataclass

from . import _style
from ._map_plots import plot_metric_map

__all__ = ["plot_contact_speed_map", "ContactMapArtists"]


@dataclass
class ContactMapArtists:
    """Artists of :func:`plot_contact_speed_map`: the map's artists and the caution text."""

    map: object
    caution: object
    ax: object


def plot_contact_speed_map(ds, *, ax=None, metric="permissible_speed", title=None, **style):
    """Permissible transient-contact speed over the region, with the caution under it.

    Parameters
    ----------
    ds : xarray.Dataset
        From :func:`inertia_review.contact_speed_map` (carries the body region and area, their
        values and sources, the contact area, the governing route and the caution text in its
        attributes; the title names the route, the area and the contact area).
    metric : {'permissible_speed', 'effective_mass'}
    ax : Axes, optional

    Returns
    -------
    ContactMapArtists
    """
    region = ds.attrs.get("body_region_name", ds.attrs.get("body_region", ""))
    route = ds.attrs.get("governing_route")
    if route is not None:       # which route governed, the body area and the contact area
        region = (f"{region}\n{route} route, {ds.attrs.get('body_area_name', '')}, "
                  f"A = {ds.attrs.get('contact_area_cm2', float('nan')):g} cm²")
    if title is None:
        title = (f"{ds.attrs.get('design', '')}: permissible contact speed, {region}"
                 if metric == "permissible_speed" else
                 f"{ds.attrs.get('design', '')}: effective mass along the motion")
    caution = ds.attrs.get("caution", "CAUTION: design-stage estimate, not a validation.")
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        artists = plot_metric_map(ds, metric, ax=layout.ax, title=title, **style)
        text = layout.caution(caution)
        layout.finish()
    return ContactMapArtists(artists, text, layout.ax)
