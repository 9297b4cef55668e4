"""The portfolio chart: dynamic against volumetric GIIP per field (a pure figure builder).

Each field is one point at (volumetric best, dynamic best) with asymmetric error bars to its
low (P90) and high (P10) on both axes, and a 1:1 line. Fields are grouped by their most
severe flag; every group has its own marker shape and a colour by kind of flag (the four
data-quality flags share yellow, with different shapes), so the groups stay apart in
grey-scale print and for colour-vision deficiencies. Colours are the Okabe-Ito palette
(Okabe & Ito 2008, "Color Universal Design"), a published colour-blind-safe set; the
pairing of colours, shapes and flags is Tankbook's own.
"""

from __future__ import annotations

from ..display import DisplayUnits
from .pz import plain

# Okabe-Ito colours (hex values as published).
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
}
NO_FLAG = "no flag"
#: flag code -> (colour, plotly marker symbol). Unknown codes take FALLBACK in turn.
FLAG_STYLE: dict[str, tuple[str, str]] = {
    NO_FLAG: (OKABE_ITO["black"], "circle-open"),
    "dynamic_below_volumetric": (OKABE_ITO["vermillion"], "triangle-down"),
    "dynamic_above_volumetric": (OKABE_ITO["blue"], "triangle-up"),
    "compartment_signature": (OKABE_ITO["reddish_purple"], "diamond"),
    "aquifer_signature": (OKABE_ITO["sky_blue"], "square"),
    "overpressure_signature": (OKABE_ITO["orange"], "pentagon"),
    "too_little_depletion": (OKABE_ITO["bluish_green"], "hexagon"),
    "data_outliers": (OKABE_ITO["yellow"], "star"),
    "data_scatter": (OKABE_ITO["yellow"], "cross"),
    "survey_above_initial": (OKABE_ITO["yellow"], "x"),
    "data_gaps": (OKABE_ITO["yellow"], "star-triangle-up"),
    "data_gas_gravity": (OKABE_ITO["yellow"], "diamond-wide"),
}
FALLBACK = (
    (OKABE_ITO["orange"], "hourglass"),
    (OKABE_ITO["blue"], "bowtie"),
    (OKABE_ITO["vermillion"], "star-square"),
)
OUTLINE = "#000000"  # a thin dark outline keeps the yellow markers visible on white
ONE_TO_ONE_COLOUR = "#555555"


def _point(row) -> tuple | None:
    """(x best, x low, x high, y best, y low, y high) in Bscf, or None when not plottable."""
    e, v = row.estimate, row.volumetric
    if e is None or v is None or e.status != "ok" or e.giip_best_bscf is None:
        return None
    if row.on_volumetric:  # its headline is the volumetric estimate: nothing dynamic to plot
        return None
    lo = e.giip_low_bscf if e.giip_low_bscf is not None else e.giip_best_bscf
    hi = e.giip_high_bscf if e.giip_high_bscf is not None else e.giip_best_bscf
    return v.best_bscf, v.low_bscf, v.high_bscf, e.giip_best_bscf, lo, hi


def _group(row) -> tuple[str, str]:
    """(code, legend title) of the field's most severe flag (flags are stored worst first)."""
    if not row.flags:
        return NO_FLAG, "no flag"
    f = row.flags[0]
    return f.get("code", "?"), f.get("title", f.get("code", "?"))


def _style(code: str, fallback_index: int) -> tuple[str, str]:
    return FLAG_STYLE.get(code) or FALLBACK[fallback_index % len(FALLBACK)]


def portfolio_figure(rows, du: DisplayUnits) -> dict:
    """Dynamic GIIP (y) against volumetric GIIP (x), one trace per flag group, error bars
    P90-P10 on both axes, and the 1:1 line; values in the user's display units.
    ``layout.meta.not_plotted`` counts the fields without both estimates."""
    groups: dict[str, dict] = {}
    not_plotted = 0
    for r in rows:
        pt = _point(r)
        if pt is None:
            not_plotted += 1
            continue
        code, title = _group(r)
        g = groups.setdefault(code, {"title": title, "rows": [], "points": []})
        g["rows"].append(r)
        g["points"].append(pt)
    label = du.label("gas_bscf")
    traces = []
    unknown = 0
    extent: list[float] = []
    order = [c for c in FLAG_STYLE if c in groups] + sorted(c for c in groups if c not in FLAG_STYLE)
    for code in order:
        g = groups[code]
        if code not in FLAG_STYLE:
            unknown += 1
        colour, symbol = _style(code, unknown - 1)
        xb, xl, xh, yb, yl, yh = (du.values("gas_bscf", col) for col in zip(*g["points"], strict=True))
        extent += xl + xh + yl + yh
        names = [plain(r.name) for r in g["rows"]]  # user text: plotly reads a few HTML tags
        flags = [plain("; ".join(f.get("title", "") for f in r.flags) or "no flag") for r in g["rows"]]
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": plain(g["title"]) if code == NO_FLAG else f"{plain(g['title'])} ({len(names)})",
                "legendgroup": code,
                "meta": {"flag_code": code},
                "x": xb,
                "y": yb,
                "text": names,
                "customdata": flags,
                "error_x": _bars(xb, xl, xh, colour),
                "error_y": _bars(yb, yl, yh, colour),
                "marker": {
                    "color": colour,
                    "symbol": symbol,
                    "size": 10,
                    "line": {"color": OUTLINE, "width": 1},
                },
                "hovertemplate": (
                    "<b>%{text}</b><br>volumetric %{x:,.1f}<br>dynamic %{y:,.1f}<br>%{customdata}"
                    f"<extra>{label}</extra>"
                ),
            }
        )
    top = max(extent) * 1.05 if extent else 1.0
    traces.append(
        {
            "type": "scatter",
            "mode": "lines",
            "name": "1:1 (dynamic = volumetric)",
            "x": [0.0, top],
            "y": [0.0, top],
            "line": {"color": ONE_TO_ONE_COLOUR, "width": 1.5, "dash": "dash"},
            "hoverinfo": "skip",
        }
    )
    axis = {"rangemode": "tozero", "gridcolor": "#e3e7eb", "zeroline": True}
    return {
        "data": traces,
        "layout": {
            "xaxis": {**axis, "title": {"text": f"Volumetric GIIP, best (bars P90–P10) [{label}]"}},
            "yaxis": {**axis, "title": {"text": f"Dynamic GIIP, best (bars P90–P10) [{label}]"}},
            "legend": {"title": {"text": "Most severe flag"}},
            "margin": {"t": 30, "r": 20},
            "hovermode": "closest",
            "meta": {"not_plotted": not_plotted},
        },
    }


def _bars(best: list, low: list, high: list, colour: str) -> dict:
    """Asymmetric error bars from the best value down to low and up to high."""
    return {
        "type": "data",
        "symmetric": False,
        "array": [h - b for b, h in zip(best, high, strict=True)],
        "arrayminus": [b - lo for b, lo in zip(best, low, strict=True)],
        "color": colour,
        "thickness": 1.2,
        "width": 3,
    }
