"""HTML datasheet cards of :class:`inertia_review.Datasheet` results (private).

The numbers are the fields of ``ir.datasheet`` (computed by the core over the map of the
design), converted to screen units only (m -> mm); nothing is recomputed here.
"""

import html

import numpy as np

from ..studies._cautions import STIFFNESS_CAUTION

__all__ = ["CARD_FIELDS", "datasheet_card_html", "datasheet_cards_html"]

#: (Datasheet field, label, screen unit, factor SI -> screen, format, better: True = larger,
#: False = smaller, None = not ranked, text when not defined)
CARD_FIELDS = (
    ("payload_rated_kg", "rated payload (worst point)", "kg", 1.0, ".3f", True,
     "n/a (no peak torque ratings)"),
    ("reach_m", "reach in the region", "mm", 1e3, ".1f", None, "n/a"),
    ("tool_speed_max_mps", "largest tool speed", "m/s", 1.0, ".3f", True,
     "n/a (no rated motor speeds)"),
    ("f1_lowest_hz", "lowest first natural frequency", "Hz", 1.0, ".1f", True,
     "n/a (no elastic joint or link)"),
    ("sag_largest_m", "largest tool sag", "mm", 1e3, ".4f", False,
     "n/a (no elastic joint or link)"),
)


def _best(sheets):
    """{field: set of indices holding the best value} (ties all marked; n/a never best)."""
    out = {}
    if len(sheets) < 2:
        return out
    for field, *_, better, _missing in CARD_FIELDS:
        if better is None:
            continue
        values = np.array([getattr(s, field) for s in sheets], float)
        finite = np.isfinite(values)
        if not finite.any():
            continue
        target = values[finite].max() if better else values[finite].min()
        out[field] = {i for i, v in enumerate(values) if np.isfinite(v) and
                      np.isclose(v, target, rtol=1e-12, atol=0.0)}
    return out


def _card(sheet, marks=frozenset()):
    rows = []
    for field, label, unit, factor, spec, _better, missing in CARD_FIELDS:
        value = getattr(sheet, field)
        text = f"{value * factor:{spec}}" if np.isfinite(value) else missing
        best = field in marks
        rows.append(f"<tr><td>{html.escape(label)} [{unit}]</td><td class='ir-sheet' "
                    f"data-field='{field}' style='text-align:right;padding-left:1em'>"
                    + (f"<b>★ {html.escape(text)}</b>" if best else html.escape(text))
                    + "</td></tr>")
    solved = f"solved {100.0 * sheet.solved_fraction:.1f} % of the region"
    return (f"<div class='ir-datasheet' data-design='{html.escape(sheet.design)}' "
            "style='border:1px solid #ccc;border-radius:4px;padding:0.4em 0.8em;margin:0.2em'>"
            f"<b>{html.escape(sheet.design)}</b> <span style='color:#555'>({solved})</span>"
            "<table>" + "".join(rows) + "</table></div>")


def _caution():
    return (f"<div style='font-size:85%;color:#555;max-width:60em' class='ir-caution'>"
            f"{html.escape(STIFFNESS_CAUTION)}</div>")


def datasheet_card_html(sheet):
    """HTML card of one :class:`~inertia_review.Datasheet` (screen units), with the caution."""
    return _card(sheet) + _caution()


def datasheet_cards_html(sheets):
    """HTML cards of several datasheets side by side, the best value of each ranked field
    marked (★; larger payload, tool speed and first frequency, smaller sag; reach not ranked),
    with the caution."""
    best = _best(sheets)
    cards = [_card(s, {f for f, idx in best.items() if i in idx}) for i, s in enumerate(sheets)]
    note = ("<div style='font-size:85%;color:#555'>★ best value of the row among the designs "
            "(larger payload, tool speed and first frequency, smaller sag; reach is not "
            "ranked).</div>") if len(sheets) > 1 else ""
    return ("<div class='ir-datasheets' style='display:flex;flex-wrap:wrap'>" + "".join(cards) +
            "</div>" + note + _caution())
