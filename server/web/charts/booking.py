"""The booking chart of a field in a reserves review: for each category, the gas produced to the
effective date and the booked remaining volume stacked, beside the frozen estimate's EUR of the
case (so an override shows as a gap between the bar and the marker).

A pure function of the review's read model (``services/reserves/views.FieldBooking``) in the
display units ``du``; the field name is escaped with :func:`plain`."""

from __future__ import annotations

from ..display import DisplayUnits
from .pz import OILFIELD, plain, short_unit

PRODUCED_COLOUR = "#999999"
BOOKED_COLOUR = "#0072b2"  # Okabe & Ito (2008) blue
EUR_COLOUR = "#d55e00"  # Okabe & Ito (2008) vermillion


def booking_figure(row, du: DisplayUnits = OILFIELD) -> dict | None:
    """Stacked bars (produced, booked remaining) and the frozen EUR per category; None when the
    frozen estimate has no EUR and nothing is booked (nothing to draw)."""
    booked = (row.booked_low_bscf, row.booked_best_bscf, row.booked_high_bscf)
    eur = (row.eur_low_bscf, row.eur_best_bscf, row.eur_high_bscf)
    if all(v is None for v in (*booked, *eur)):
        return None
    unit = short_unit(du, "gas_bscf")
    cats = list(row.categories)
    name = plain(row.field_name)
    produced = du.values("gas_bscf", [row.produced_gas_bscf] * 3)
    hover = f"{name} %{{x}}<br>%{{fullData.name}}: %{{y:,.3f}} {unit}<extra></extra>"
    traces = [
        {
            "type": "bar",
            "name": "produced to the effective date",
            "x": cats,
            "y": produced,
            "marker": {"color": PRODUCED_COLOUR},
            "hovertemplate": hover,
        },
        {
            "type": "bar",
            "name": "booked remaining",
            "x": cats,
            "y": du.values("gas_bscf", [float("nan") if v is None else v for v in booked]),
            "marker": {"color": BOOKED_COLOUR},
            "hovertemplate": hover,
        },
        {
            "type": "scatter",
            "mode": "markers",
            "name": "EUR of the frozen estimate",
            "x": cats,
            "y": du.values("gas_bscf", [float("nan") if v is None else v for v in eur]),
            "marker": {"color": EUR_COLOUR, "symbol": "diamond", "size": 12, "line": {"width": 1}},
            "hovertemplate": hover,
        },
    ]
    layout = {
        "barmode": "stack",
        "xaxis": {"title": {"text": "Category"}},
        "yaxis": {"title": {"text": f"Gas ({unit})"}, "rangemode": "tozero", "gridcolor": "#e3e7eb"},
        "legend": {"orientation": "h", "y": -0.25},
        "margin": {"l": 80, "r": 30, "t": 20, "b": 60},
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
    }
    return {"data": traces, "layout": layout}
