"""Chart builders: pure functions from stored results to plotly figure dicts."""

from __future__ import annotations

from collections import defaultdict

from .templating import date_from_days

# Our own palette: distinguishable for common colour-vision deficiencies, paired with shapes.
WELL_COLOURS = ("#1f5f8b", "#c2571a", "#3c8d5a", "#7a4f9a", "#a8862b", "#2f8f9d", "#8c3b4f")
WELL_SYMBOLS = ("circle", "square", "diamond", "triangle-up", "triangle-down", "pentagon", "hexagon")
LINE_COLOUR = "#22313f"
BAND_COLOUR = "rgba(34, 49, 63, 0.14)"
UNCORRECTED_COLOUR = "#8a949c"
SET_ASIDE_COLOUR = "#6b747b"
ABANDON_COLOUR = "#b03a2e"
VOLUMETRIC_COLOUR = "rgba(168, 134, 43, 0.25)"


def _axis(title: str) -> dict:
    return {"title": {"text": title}, "zeroline": True, "rangemode": "tozero", "gridcolor": "#e3e7eb"}


def _statuses(detail: dict) -> dict[int, dict]:
    """Point status by prepared-point index: from the estimate, else from stage 1 alone."""
    pz = detail.get("pz") or {}
    if pz.get("points"):
        return {s["index"]: s for s in pz["points"]}
    out = {}
    for p in (detail.get("prepared") or {}).get("points") or []:
        status = "used" if p["included"] else "excluded"
        out[p["index"]] = {"status": status, "reason": p.get("reason"), "corrected_pz_psia": p["pz_psia"]}
    return out


def _hover(p: dict, s: dict, corrected: bool) -> str:
    text = f"{p['well'] or 'survey'}, {date_from_days(p['t_days'])}<br>p/z {p['pz_psia']:,.0f} psia"
    if corrected:
        text += f", corrected {s['corrected_pz_psia']:,.0f} psia"
    if s.get("reason"):
        text += "<br>" + s["reason"]
    return text


def pz_figure(detail: dict, volumetric: dict | None = None) -> dict:
    """p/z against cumulative gas.

    Draws: used surveys by well (the ce-corrected p/z when a correction applies, with
    the measured p/z faded behind them); set-aside surveys (engineer's exclusions and
    outliers, each with its reason on hover); the fitted line extended to p/z = 0 with
    its confidence band; the abandonment point (EUR); GIIP's P90-P10 range on the axis;
    the uncorrected line for comparison; and the volumetric GIIP range.
    """
    prepared = detail.get("prepared") or {}
    pz = detail.get("pz") or {}
    points = prepared.get("points") or []
    status = _statuses(detail)
    corrected = bool(pz) and pz.get("overpressure_mode", "off") != "off"
    by_well: dict[str, list[tuple[dict, dict]]] = defaultdict(list)
    set_aside: dict[str, list[tuple[dict, dict]]] = defaultdict(list)
    for p in points:
        s = status.get(p["index"], {"status": "used", "reason": None, "corrected_pz_psia": p["pz_psia"]})
        if s["status"] == "used":
            by_well[p["well"] or "survey"].append((p, s))
        else:
            set_aside[s["status"]].append((p, s))
    traces = []
    if corrected:
        used = [ps for pts in by_well.values() for ps in pts]
        traces.append(
            _markers(
                "measured p/z (uncorrected)",
                used,
                lambda p, s: p["pz_psia"],
                {"color": UNCORRECTED_COLOUR, "symbol": "circle-open", "size": 7, "opacity": 0.6},
                corrected,
            )
        )
    for i, (well, pts) in enumerate(sorted(by_well.items())):
        marker = {"color": WELL_COLOURS[i % len(WELL_COLOURS)], "symbol": WELL_SYMBOLS[i % len(WELL_SYMBOLS)]}
        traces.append(
            _markers(well, pts, _y_of(corrected), {**marker, "size": 8}, corrected),
        )
    labels = {"excluded": ("set aside by the engineer", "x-thin-open"), "outlier": ("outlier (rule)", "x")}
    for kind, pts in sorted(set_aside.items()):
        name, symbol = labels.get(kind, (kind, "x"))
        marker = {"color": SET_ASIDE_COLOUR, "symbol": symbol, "size": 10, "line": {"width": 2}}
        traces.append(_markers(name, pts, _y_of(corrected), marker, corrected))
    if pz:
        traces.extend(_line_traces(pz, prepared, corrected))
    uncorrected = detail.get("pz_uncorrected")
    if uncorrected:
        g_u, a_u = uncorrected["giip_bscf"], uncorrected["intercept_psia"]
        traces.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"uncorrected line, GIIP {g_u:,.1f} Bscf",
                "x": [0.0, g_u],
                "y": [a_u, 0.0],
                "line": {"color": UNCORRECTED_COLOUR, "width": 1.5, "dash": "dash"},
                "hovertemplate": "%{x:.1f} Bscf, %{y:.0f} psia<extra>uncorrected</extra>",
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
    y_title = "p/z (psia)"
    if corrected:
        y_title = "p/z and corrected (p/z)[1 − ce(pi − p)] (psia)"
    return {
        "data": traces,
        "layout": {
            "xaxis": _axis("Cumulative gas produced, Gp (Bscf)"),
            "yaxis": _axis(y_title),
            "shapes": shapes,
            "legend": {"orientation": "h", "y": -0.2, "traceorder": "normal"},
            "margin": {"l": 60, "r": 20, "t": 20, "b": 60},
            "hovermode": "closest",
            "paper_bgcolor": "#ffffff",
            "plot_bgcolor": "#fbfcfd",
        },
    }


def _y_of(corrected: bool):
    return (lambda p, s: s["corrected_pz_psia"]) if corrected else (lambda p, s: p["pz_psia"])


def _markers(name, pts, y_of, marker, corrected) -> dict:
    return {
        "type": "scatter",
        "mode": "markers",
        "name": name,
        "x": [p["gp_bscf"] for p, _ in pts],
        "y": [y_of(p, s) for p, s in pts],
        "marker": marker,
        "text": [_hover(p, s, corrected) for p, s in pts],
        "hovertemplate": "%{text}<br>Gp %{x:.2f} Bscf<extra></extra>",
    }


def _line_traces(pz: dict, prepared: dict, corrected: bool) -> list[dict]:
    giip, intercept = pz["giip_bscf"], pz["intercept_psia"]
    band = pz["band"]
    # p/z cannot go below zero: the band is drawn clipped there (the data keep the full band)
    low = [max(v, 0.0) for v in band["low_psia"]]
    high = [max(v, 0.0) for v in band["high_psia"]]
    level = f"{100 * band['level']:.0f} %"
    traces = [
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"{level} band of the line",
            "x": band["gp_bscf"],
            "y": low,
            "line": {"width": 0},
            "showlegend": False,
            "hoverinfo": "skip",
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"{level} confidence band of the line",
            "x": band["gp_bscf"],
            "y": high,
            "line": {"width": 0},
            "fill": "tonexty",
            "fillcolor": BAND_COLOUR,
            "hoverinfo": "skip",
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"fitted line, GIIP {giip:,.1f} Bscf" + (" (corrected)" if corrected else ""),
            "x": [0.0, giip],
            "y": [intercept, 0.0],
            "line": {"color": LINE_COLOUR, "width": 2},
            "hovertemplate": "%{x:.1f} Bscf, %{y:.0f} psia<extra>fit</extra>",
        },
    ]
    boot = (pz.get("giip_range_bscf") or {}).get("bootstrap")
    if boot and boot.get("p90") is not None and boot.get("p10") is not None:
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"GIIP P90-P10 {boot['p90']:,.1f}-{boot['p10']:,.1f} Bscf",
                "x": [giip],
                "y": [0.0],
                "marker": {"color": LINE_COLOUR, "symbol": "diamond", "size": 9},
                "error_x": {
                    "type": "data",
                    "symmetric": False,
                    "array": [boot["p10"] - giip],
                    "arrayminus": [giip - boot["p90"]],
                    "color": LINE_COLOUR,
                    "thickness": 2,
                    "width": 6,
                },
                "hovertemplate": "GIIP %{x:.1f} Bscf<extra>bootstrap P90-P10</extra>",
            }
        )
    eur = pz.get("eur_bscf")
    pz_a = pz.get("abandonment_pz_psia", prepared.get("abandonment_pz_psia"))
    if eur is not None and pz_a is not None:
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"abandonment, EUR {eur:,.1f} Bscf",
                "x": [eur],
                "y": [pz_a],
                "marker": {"color": ABANDON_COLOUR, "symbol": "star", "size": 13},
                "hovertemplate": "EUR %{x:.1f} Bscf at p/z %{y:.0f} psia<extra></extra>",
            }
        )
    return traces


# --- diagnosis charts (model fits, Cole plot) -------------------------------------------

MODEL_COLOURS = {
    "single_tank": LINE_COLOUR,
    "tank_ce": "#7a4f9a",
    "two_tank": "#c2571a",
    "multi_tank": "#c2571a",
}
AQUIFER_COLOUR = "#2f8f9d"
OBSERVED_COLOUR = "#5b6770"


def _layout(x_title: str, y_title: str) -> dict:
    return {
        "xaxis": _axis(x_title),
        "yaxis": _axis(y_title),
        "legend": {"orientation": "h", "y": -0.2},
        "margin": {"l": 60, "r": 20, "t": 20, "b": 60},
        "hovermode": "closest",
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
    }


def model_fits_figure(diagnosis: dict) -> dict:
    """Observed p/z of the surveys every model was fitted to, and each model's fitted p/z,
    against cumulative gas (one line per model, in the comparison's rank order)."""
    gp = diagnosis.get("gp_bscf") or []
    pz = diagnosis.get("pz_psia") or []
    order = sorted(range(len(gp)), key=lambda i: gp[i])
    traces = [
        {
            "type": "scatter",
            "mode": "markers",
            "name": "surveys used by every model",
            "x": [gp[i] for i in order],
            "y": [pz[i] for i in order],
            "marker": {"color": OBSERVED_COLOUR, "symbol": "circle-open", "size": 8},
            "hovertemplate": "%{x:.2f} Bscf, p/z %{y:.0f} psia<extra>survey</extra>",
        }
    ]
    fits = {m["name"]: m for m in diagnosis.get("models") or []}
    ranked = [r["name"] for r in ((diagnosis.get("comparison") or {}).get("rows") or [])]
    labels = diagnosis.get("compartment") or [None] * len(gp)
    groups = sorted({lbl for lbl in labels if lbl is not None})
    dashes = ("solid", "dash", "dot", "dashdot", "longdash")
    for k, name in enumerate(ranked + [n for n in fits if n not in ranked]):
        m = fits.get(name)
        if m is None or len(m.get("fitted_pz_psia") or []) != len(gp):
            continue
        colour = MODEL_COLOURS.get(name, AQUIFER_COLOUR if name.startswith("aquifer_") else LINE_COLOUR)
        giip = m.get("giip_bscf")
        title = m["title"] + (f", GIIP {giip:,.1f} Bscf" if giip is not None else "")
        # A multi-tank model predicts each compartment's own p/z: one line per compartment.
        split = name in ("two_tank", "multi_tank") and len(groups) > 1
        for group in groups if split else [None]:
            idx = [i for i in order if not split or labels[i] == group]
            traces.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": title + (f" ({group})" if split else ""),
                    "x": [gp[i] for i in idx],
                    "y": [m["fitted_pz_psia"][i] for i in idx],
                    "line": {"color": colour, "width": 2, "dash": dashes[k % len(dashes)]},
                    "hovertemplate": "%{x:.2f} Bscf, %{y:.0f} psia<extra>" + name + "</extra>",
                }
            )
    return {"data": traces, "layout": _layout("Cumulative gas produced, Gp (Bscf)", "p/z (psia)")}


def cole_figure(plots: list[dict]) -> dict:
    """Cole plot: F/Eg (and the modified F/(Eg + Efw) when given) against Gp, the points
    used for the trend, and the fitted trend line with its direction and significance."""
    traces = []
    for plot in plots:
        modified = bool(plot.get("modified"))
        label = "F/(Eg+Efw)" if modified else "F/Eg"
        colour = "#7a4f9a" if modified else AQUIFER_COLOUR
        gp = plot.get("gp_bscf") or []
        ratio = plot.get("ratio_bscf") or []
        used = plot.get("used") or [True] * len(gp)
        keep = [i for i in range(len(gp)) if ratio[i] is not None]
        for flag, name, symbol in (
            (True, label, "circle"),
            (False, f"{label}, not used for the trend", "x-open"),
        ):
            idx = [i for i in keep if bool(used[i]) is flag]
            if idx:
                traces.append(
                    {
                        "type": "scatter",
                        "mode": "markers",
                        "name": name,
                        "x": [gp[i] for i in idx],
                        "y": [ratio[i] for i in idx],
                        "marker": {"color": colour, "symbol": symbol, "size": 8},
                        "hovertemplate": "%{x:.2f} Bscf, %{y:.1f} Bscf<extra>" + label + "</extra>",
                    }
                )
        trend = plot.get("trend") or {}
        xs = [gp[i] for i in keep if used[i]]
        if xs and trend.get("slope") is not None and trend.get("intercept_bscf") is not None:
            x0, x1 = min(xs), max(xs)
            p = trend.get("p_value")
            traces.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": f"{label} trend: {trend.get('direction', '')}"
                    + (f" (p = {p:.2g})" if p is not None else ""),
                    "x": [x0, x1],
                    "y": [trend["intercept_bscf"] + trend["slope"] * x for x in (x0, x1)],
                    "line": {"color": colour, "width": 2, "dash": "dash"},
                    "hoverinfo": "skip",
                }
            )
    return {"data": traces, "layout": _layout("Cumulative gas produced, Gp (Bscf)", "F/Eg (Bscf)")}
