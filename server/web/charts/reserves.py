"""The reserves movements charts: the waterfall from last year's booking to this year's, and a
field's booked 2P over the reviews. Pure functions from services/reserves/movements.py results to
plotly figure dicts, in Bscf like every reserves page; asset, field and review names are escaped
with :func:`plain`."""

from __future__ import annotations

from .pz import plain

# Okabe & Ito (2008) colour-blind-safe colours; the bars also differ by position and sign.
UP_COLOUR = "#0072b2"  # blue: additions
DOWN_COLOUR = "#d55e00"  # vermillion: production, disposals, downward revisions
TOTAL_COLOUR = "#555555"  # opening and closing
APPROVED_COLOUR = "#0072b2"
THIS_COLOUR = "#d55e00"


def _group_title(group: str) -> str:
    return (
        "Portfolio"
        if group == "portfolio"
        else plain(group[len("asset ") :] if group.startswith("asset ") else group)
    )


def reserves_waterfall_figure(w) -> dict:
    """Opening, each step of the roll-forward and closing of one group and category [Bscf]
    (``w``: a movements.Waterfall). Opening and closing are drawn as totals from zero; the closing
    bar is the booked closing, so a review out of balance shows a gap before it."""
    labels = ["opening"] + [s.label for s in w.steps] + ["closing"]
    values = [w.opening_bscf] + [s.delta_bscf for s in w.steps] + [w.closing_bscf]
    measure = ["absolute"] + ["relative"] * len(w.steps) + ["absolute"]
    trace = {
        "type": "waterfall",
        "name": f"{w.category} (Bscf)",
        "orientation": "v",
        "x": labels,
        "y": values,
        "measure": measure,
        "text": [
            f"{v:+,.3f}" if m == "relative" else f"{v:,.3f}" for v, m in zip(values, measure, strict=True)
        ],
        "textposition": "outside",
        "increasing": {"marker": {"color": UP_COLOUR}},
        "decreasing": {"marker": {"color": DOWN_COLOUR}},
        "totals": {"marker": {"color": TOTAL_COLOUR}},
        "connector": {"line": {"color": "#8a949c", "width": 1}},
        "hovertemplate": "%{x}: %{text} Bscf<extra></extra>",
    }
    return {
        "data": [trace],
        "layout": {
            "title": {
                "text": f"{_group_title(w.group)}: {w.category} reserves, last approved review to this one"
            },
            "yaxis": {"title": {"text": f"{w.category} remaining gas (Bscf)"}, "gridcolor": "#e3e7eb"},
            "xaxis": {"title": {"text": "Step of the reconciliation"}},
            "showlegend": False,
            "margin": {"l": 80, "r": 30, "t": 50, "b": 70},
            "paper_bgcolor": "#ffffff",
            "plot_bgcolor": "#fbfcfd",
            "meta": {"group": plain(w.group), "category": w.category, "balances": w.balances},
        },
    }


def reserves_history_figure(points, field_name: str) -> dict:
    """A field's booked 2P reserves in each approved review, and in this review marked with its
    status (``points``: movements.HistoryPoint, oldest first) [Bscf]. Reviews that did not book
    the field leave a gap."""
    name = plain(field_name)

    def trace(pts, label, colour, symbol, mode):
        return {
            "type": "scatter",
            "mode": mode,
            "name": label,
            "x": [p.effective_date.isoformat() for p in pts],
            "y": [p.reserves_2p_bscf for p in pts],
            "text": [
                f"{plain(p.review_name)} rev. {p.revision} ({p.status}"
                + ("" if p.in_review else "; field not booked")
                + (", contingent: no reserves" if p.resource_class == "contingent" else "")
                + ")"
                for p in pts
            ],
            "marker": {"color": colour, "symbol": symbol, "size": 10, "line": {"color": colour, "width": 2}},
            "line": {"color": colour},
            "connectgaps": False,
            "hovertemplate": "%{x}: %{y:,.3f} Bscf<br>%{text}<extra></extra>",
        }

    approved = [p for p in points if not p.this_review]
    this = [p for p in points if p.this_review]
    data = [trace(approved, "approved reviews", APPROVED_COLOUR, "circle", "lines+markers")]
    if this:
        data.append(trace(this, f"this review ({this[0].status})", THIS_COLOUR, "diamond-open", "markers"))
    return {
        "data": data,
        "layout": {
            "title": {"text": f"{name}: booked 2P reserves by review"},
            "xaxis": {
                "title": {"text": "Effective date"},
                "type": "date",
                "tickvals": [p.effective_date.isoformat() for p in points],
                "tickformat": "%Y-%m-%d",
                "gridcolor": "#e3e7eb",
            },
            "yaxis": {
                "title": {"text": "2P remaining gas (Bscf)"},
                "rangemode": "tozero",
                "gridcolor": "#e3e7eb",
            },
            "legend": {"orientation": "h", "y": -0.2},
            "margin": {"l": 80, "r": 30, "t": 50, "b": 60},
            "paper_bgcolor": "#ffffff",
            "plot_bgcolor": "#fbfcfd",
        },
    }
