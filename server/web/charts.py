"""Chart builders: pure functions from stored results to plotly figure dicts."""

from __future__ import annotations

from collections import defaultdict

# Our own palette: distinguishable for common colour-vision deficiencies, paired with shapes.
WELL_COLOURS = ("#1f5f8b", "#c2571a", "#3c8d5a", "#7a4f9a", "#a8862b", "#2f8f9d", "#8c3b4f")
WELL_SYMBOLS = ("circle", "square", "diamond", "triangle-up", "triangle-down", "pentagon", "hexagon")
LINE_COLOUR = "#22313f"
VOLUMETRIC_COLOUR = "rgba(168, 134, 43, 0.25)"


def _axis(title: str) -> dict:
    return {"title": {"text": title}, "zeroline": True, "rangemode": "tozero", "gridcolor": "#e3e7eb"}


def pz_figure(detail: dict, volumetric: dict | None = None) -> dict:
    """p/z against cumulative gas: surveys by well, excluded points, the fitted line
    extended to p/z = 0, the abandonment point and the volumetric GIIP range."""
    prepared = detail.get("prepared") or {}
    pz = detail.get("pz") or {}
    points = prepared.get("points") or []
    by_well: dict[str, list[dict]] = defaultdict(list)
    excluded = []
    for p in points:
        (by_well[p["well"] or "survey"] if p["included"] else excluded).append(p)
    traces = []
    for i, (well, pts) in enumerate(sorted(by_well.items())):
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": well,
                "x": [p["gp_bscf"] for p in pts],
                "y": [p["pz_psia"] for p in pts],
                "marker": {
                    "color": WELL_COLOURS[i % len(WELL_COLOURS)],
                    "symbol": WELL_SYMBOLS[i % len(WELL_SYMBOLS)],
                    "size": 8,
                },
                "hovertemplate": "%{x:.2f} Bscf, p/z %{y:.0f} psia<extra>" + well + "</extra>",
            }
        )
    if excluded:
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "set aside",
                "x": [p["gp_bscf"] for p in excluded],
                "y": [p["pz_psia"] for p in excluded],
                "marker": {"color": "#8a949c", "symbol": "x-open", "size": 9},
                "text": [p.get("reason") or "excluded" for p in excluded],
                "hovertemplate": "%{x:.2f} Bscf, p/z %{y:.0f} psia: %{text}<extra></extra>",
            }
        )
    giip = pz.get("giip_bscf")
    intercept = pz.get("intercept_psia")
    if giip and intercept:
        traces.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"fitted line, GIIP {giip:.1f} Bscf",
                "x": [0.0, giip],
                "y": [intercept, 0.0],
                "line": {"color": LINE_COLOUR, "width": 2},
                "hovertemplate": "%{x:.1f} Bscf, %{y:.0f} psia<extra>fit</extra>",
            }
        )
        eur = pz.get("eur_bscf")
        pz_a = prepared.get("abandonment_pz_psia")
        if eur is not None and pz_a is not None:
            traces.append(
                {
                    "type": "scatter",
                    "mode": "markers",
                    "name": f"abandonment, EUR {eur:.1f} Bscf",
                    "x": [eur],
                    "y": [pz_a],
                    "marker": {"color": "#b03a2e", "symbol": "star", "size": 13},
                    "hovertemplate": "EUR %{x:.1f} Bscf at p/z %{y:.0f} psia<extra></extra>",
                }
            )
    shapes = []
    if volumetric:
        shapes.append(
            {
                "type": "rect",
                "xref": "x",
                "yref": "paper",
                "x0": volumetric["low_bscf"],
                "x1": volumetric["high_bscf"],
                "y0": 0,
                "y1": 0.06,
                "fillcolor": VOLUMETRIC_COLOUR,
                "line": {"width": 0},
                "layer": "below",
            }
        )
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": (f"volumetric {volumetric['low_bscf']:.0f}-{volumetric['high_bscf']:.0f} Bscf"),
                "x": [volumetric["best_bscf"]],
                "y": [0.0],
                "marker": {"color": "#a8862b", "symbol": "line-ns-open", "size": 16, "line": {"width": 3}},
                "hovertemplate": "volumetric best %{x:.1f} Bscf<extra></extra>",
            }
        )
    return {
        "data": traces,
        "layout": {
            "xaxis": _axis("Cumulative gas produced, Gp (Bscf)"),
            "yaxis": _axis("p/z (psia)"),
            "shapes": shapes,
            "legend": {"orientation": "h", "y": -0.2},
            "margin": {"l": 60, "r": 20, "t": 20, "b": 60},
            "hovermode": "closest",
            "paper_bgcolor": "#ffffff",
            "plot_bgcolor": "#fbfcfd",
        },
    }
