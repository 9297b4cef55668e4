"""Chart builders: pure functions from stored results to plotly figure dicts."""

from __future__ import annotations

from collections import defaultdict

from ..display import DisplayUnits
from ..templating import date_from_days

OILFIELD = DisplayUnits("oilfield")  # the default display units of a builder

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


def plain(text) -> str:
    """User text (well names, reasons) for plotly labels, which read a few HTML tags: escaped."""
    return str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def short_unit(du: DisplayUnits, kind: str) -> str:
    """A unit label without its standard-conditions basis (for legends and hover text)."""
    return du.label(kind).split(" (")[0]


def gp_title(du: DisplayUnits, wet_gas: bool) -> str:
    """The cumulative-gas axis, saying which gas it counts: the wet-gas equivalent when the
    estimate added condensate (or vapour) as gas, else the separator gas as produced."""
    gas = "wet-gas equivalent" if wet_gas else "separator gas"
    return f"Cumulative gas produced, Gp, {gas} ({du.label('gas_bscf')})"


def counts_wet_gas(prepared: dict) -> bool:
    """Whether the prepared data's cumulative gas is more than the separator gas."""
    counted, separator = prepared.get("cumulative_gas_bscf"), prepared.get("cumulative_separator_gas_bscf")
    return counted is not None and separator is not None and counted > separator * (1 + 1e-9)


def _num(du: DisplayUnits, kind: str, value: float, digits: int | None = None) -> str:
    return f"{du.show(kind, value, digits)} {short_unit(du, kind)}"


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


def _hover(p: dict, s: dict, corrected: bool, du: DisplayUnits) -> str:
    where = f"{plain(p['well'] or 'survey')}, {date_from_days(p['t_days'])}"
    text = f"{where}<br>p/z {_num(du, 'pz', p['pz_psia'], 0)}"
    if corrected:
        text += f", corrected {_num(du, 'pz', s['corrected_pz_psia'], 0)}"
    if s.get("reason"):
        text += "<br>" + plain(s["reason"])
    return text


def pz_figure(detail: dict, volumetric: dict | None = None, du: DisplayUnits = OILFIELD) -> dict:
    """p/z against cumulative gas, in the display units ``du``.

    Draws: used surveys by well (the ce-corrected p/z when a correction applies, with
    the measured p/z faded behind them); set-aside surveys (engineer's exclusions and
    outliers, each with its reason on hover); the fitted line extended to p/z = 0 with
    its confidence band; the abandonment p/z as a dotted level and the abandonment point
    (EUR); GIIP's P90-P10 range on the axis; the uncorrected line for comparison; and the
    volumetric GIIP range.
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
                du,
            )
        )
    for i, (well, pts) in enumerate(sorted(by_well.items())):
        marker = {"color": WELL_COLOURS[i % len(WELL_COLOURS)], "symbol": WELL_SYMBOLS[i % len(WELL_SYMBOLS)]}
        traces.append(
            _markers(plain(well), pts, _y_of(corrected), {**marker, "size": 8}, corrected, du),
        )
    labels = {"excluded": ("set aside by the engineer", "x-thin-open"), "outlier": ("outlier (rule)", "x")}
    for kind, pts in sorted(set_aside.items()):
        name, symbol = labels.get(kind, (kind, "x"))
        marker = {"color": SET_ASIDE_COLOUR, "symbol": symbol, "size": 10, "line": {"width": 2}}
        traces.append(_markers(name, pts, _y_of(corrected), marker, corrected, du))
    if pz:
        traces.extend(_line_traces(pz, prepared, corrected, du))
    gas, pzu = short_unit(du, "gas_bscf"), short_unit(du, "pz")
    uncorrected = detail.get("pz_uncorrected")
    if uncorrected:
        g_u, a_u = uncorrected["giip_bscf"], uncorrected["intercept_psia"]
        traces.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"uncorrected line, GIIP {_num(du, 'gas_bscf', g_u)}",
                "x": du.values("gas_bscf", [0.0, g_u]),
                "y": du.values("pz", [a_u, 0.0]),
                "line": {"color": UNCORRECTED_COLOUR, "width": 1.5, "dash": "dash"},
                "hovertemplate": f"%{{x:.1f}} {gas}, %{{y:.0f}} {pzu}<extra>uncorrected</extra>",
            }
        )
    if not corrected and not counts_wet_gas(prepared):
        traces.extend(_forecast_paths(detail.get("forecast"), du))
    shapes = []
    if volumetric:
        shapes.append(
            {
                "type": "rect",
                "xref": "x",
                "yref": "paper",
                "x0": du.value("gas_bscf", volumetric["low_bscf"]),
                "x1": du.value("gas_bscf", volumetric["high_bscf"]),
                "y0": 0,
                "y1": 0.06,
                "fillcolor": VOLUMETRIC_COLOUR,
                "line": {"width": 0},
                "layer": "below",
            }
        )
        low, high = (
            du.show("gas_bscf", volumetric[k], 0).replace(",", "") for k in ("low_bscf", "high_bscf")
        )
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"volumetric {low}-{high} {gas}",
                "x": du.values("gas_bscf", [volumetric["best_bscf"]]),
                "y": [0.0],
                "marker": {"color": "#a8862b", "symbol": "line-ns-open", "size": 16, "line": {"width": 3}},
                "hovertemplate": f"volumetric best %{{x:.1f}} {gas}<extra></extra>",
            }
        )
    y_title = f"p/z ({du.label('pz')})"
    if corrected:
        y_title = f"p/z and corrected (p/z)[1 − ce(pi − p)] ({du.label('pz')})"
    return {
        "data": traces,
        "layout": {
            "xaxis": _axis(gp_title(du, counts_wet_gas(prepared))),
            "yaxis": _axis(y_title),
            "shapes": shapes,
            "legend": {"orientation": "h", "y": -0.2, "traceorder": "normal"},
            "margin": {"l": 60, "r": 20, "t": 20, "b": 60},
            "hovermode": "closest",
            "paper_bgcolor": "#ffffff",
            "plot_bgcolor": "#fbfcfd",
        },
    }


FORECAST_PATH_STYLE = {"low": ("#d55e00", "dot"), "best": ("#0072b2", "solid"), "high": ("#009e73", "dash")}


def _forecast_paths(forecast: dict | None, du: DisplayUnits) -> list[dict]:
    """Each case's forecast path (p/z at month ends against cumulative gas), from the end of the
    history to where it stops. Drawn only on the plain p/z chart of separator gas: the forecast
    counts separator gas and plain p/z, so on a corrected or wet-gas chart it would not line up."""
    traces = []
    gas, pzu = short_unit(du, "gas_bscf"), short_unit(du, "pz")
    for p in (forecast or {}).get("profiles") or []:
        path = p.get("pz_psia")
        if not path or p["case"] not in FORECAST_PATH_STYLE:
            continue
        colour, dash = FORECAST_PATH_STYLE[p["case"]]
        pairs = [
            (g, v)
            for g, v in zip(p["cumulative_bscf"], path, strict=False)
            if g is not None and v is not None
        ]
        traces.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"forecast path, {p['case']}",
                "x": du.values("gas_bscf", [g for g, _ in pairs]),
                "y": du.values("pz", [v for _, v in pairs]),
                "line": {"color": colour, "width": 2, "dash": dash},
                "hovertemplate": f"%{{x:.1f}} {gas}, %{{y:.0f}} {pzu}<extra>forecast {p['case']}</extra>",
            }
        )
    return traces


def _y_of(corrected: bool):
    return (lambda p, s: s["corrected_pz_psia"]) if corrected else (lambda p, s: p["pz_psia"])


def _markers(name, pts, y_of, marker, corrected, du: DisplayUnits) -> dict:
    return {
        "type": "scatter",
        "mode": "markers",
        "name": name,
        "x": du.values("gas_bscf", [p["gp_bscf"] for p, _ in pts]),
        "y": du.values("pz", [y_of(p, s) for p, s in pts]),
        "marker": marker,
        "text": [_hover(p, s, corrected, du) for p, s in pts],
        "customdata": [p.get("survey_id") for p, _ in pts],
        "hovertemplate": "%{text}<br>Gp %{x:.2f} " + short_unit(du, "gas_bscf") + "<extra></extra>",
    }


def _line_traces(pz: dict, prepared: dict, corrected: bool, du: DisplayUnits) -> list[dict]:
    giip, intercept = pz["giip_bscf"], pz["intercept_psia"]
    gas, pzu = short_unit(du, "gas_bscf"), short_unit(du, "pz")
    band = pz["band"]
    # p/z cannot go below zero: the band is drawn clipped there (the data keep the full band)
    low = du.values("pz", [max(v, 0.0) for v in band["low_psia"]])
    high = du.values("pz", [max(v, 0.0) for v in band["high_psia"]])
    band_x = du.values("gas_bscf", band["gp_bscf"])
    level = f"{100 * band['level']:.0f} %"
    traces = [
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"{level} band of the line",
            "x": band_x,
            "y": low,
            "line": {"width": 0},
            "showlegend": False,
            "hoverinfo": "skip",
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"{level} confidence band of the line",
            "x": band_x,
            "y": high,
            "line": {"width": 0},
            "fill": "tonexty",
            "fillcolor": BAND_COLOUR,
            "hoverinfo": "skip",
        },
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"fitted line, GIIP {_num(du, 'gas_bscf', giip)}" + (" (corrected)" if corrected else ""),
            "x": du.values("gas_bscf", [0.0, giip]),
            "y": du.values("pz", [intercept, 0.0]),
            "line": {"color": LINE_COLOUR, "width": 2},
            "hovertemplate": f"%{{x:.1f}} {gas}, %{{y:.0f}} {pzu}<extra>fit</extra>",
        },
    ]
    boot = (pz.get("giip_range_bscf") or {}).get("bootstrap")
    if boot and boot.get("p90") is not None and boot.get("p10") is not None:
        g, p90, p10 = du.values("gas_bscf", [giip, boot["p90"], boot["p10"]])
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "GIIP P90-P10 "
                + f"{du.show('gas_bscf', boot['p90'])}-{du.show('gas_bscf', boot['p10'])} {gas}",
                "x": [g],
                "y": [0.0],
                "marker": {"color": LINE_COLOUR, "symbol": "diamond", "size": 9},
                "error_x": {
                    "type": "data",
                    "symmetric": False,
                    "array": [p10 - g],
                    "arrayminus": [g - p90],
                    "color": LINE_COLOUR,
                    "thickness": 2,
                    "width": 6,
                },
                "hovertemplate": f"GIIP %{{x:.1f}} {gas}<extra>bootstrap P90-P10</extra>",
            }
        )
    eur = pz.get("eur_bscf")
    pz_a = pz.get("abandonment_pz_psia", prepared.get("abandonment_pz_psia"))
    if eur is not None and pz_a is not None:
        traces.append(
            {
                "type": "scatter",
                "mode": "lines",
                "name": f"abandonment p/z{' (corrected)' if corrected else ''} {_num(du, 'pz', pz_a, 0)}",
                "x": du.values("gas_bscf", [0.0, eur]),
                "y": du.values("pz", [pz_a, pz_a]),
                "line": {"color": ABANDON_COLOUR, "width": 1, "dash": "dot"},
                "hoverinfo": "skip",
            }
        )
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": f"abandonment, EUR {_num(du, 'gas_bscf', eur)}",
                "x": du.values("gas_bscf", [eur]),
                "y": du.values("pz", [pz_a]),
                "marker": {"color": ABANDON_COLOUR, "symbol": "star", "size": 13},
                "hovertemplate": f"EUR %{{x:.1f}} {gas} at p/z %{{y:.0f}} {pzu}<extra></extra>",
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


def model_fits_figure(diagnosis: dict, du: DisplayUnits = OILFIELD, *, wet_gas: bool = False) -> dict:
    """Observed p/z of the surveys every model was fitted to, and each model's fitted p/z,
    against cumulative gas (one line per model, in the comparison's rank order)."""
    gp = diagnosis.get("gp_bscf") or []
    pz = diagnosis.get("pz_psia") or []
    order = sorted(range(len(gp)), key=lambda i: gp[i])
    gas, pzu = short_unit(du, "gas_bscf"), short_unit(du, "pz")
    traces = [
        {
            "type": "scatter",
            "mode": "markers",
            "name": "surveys used by every model",
            "x": du.values("gas_bscf", [gp[i] for i in order]),
            "y": du.values("pz", [pz[i] for i in order]),
            "marker": {"color": OBSERVED_COLOUR, "symbol": "circle-open", "size": 8},
            "hovertemplate": f"%{{x:.2f}} {gas}, p/z %{{y:.0f}} {pzu}<extra>survey</extra>",
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
        title = m["title"] + (f", GIIP {_num(du, 'gas_bscf', giip)}" if giip is not None else "")
        # A multi-tank model predicts each compartment's own p/z: one line per compartment.
        split = name in ("two_tank", "multi_tank") and len(groups) > 1
        for group in groups if split else [None]:
            idx = [i for i in order if not split or labels[i] == group]
            traces.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": title + (f" ({plain(group)})" if split else ""),
                    "x": du.values("gas_bscf", [gp[i] for i in idx]),
                    "y": du.values("pz", [m["fitted_pz_psia"][i] for i in idx]),
                    "line": {"color": colour, "width": 2, "dash": dashes[k % len(dashes)]},
                    "hovertemplate": f"%{{x:.2f}} {gas}, %{{y:.0f}} {pzu}<extra>{m['title']}</extra>",
                }
            )
    return {"data": traces, "layout": _layout(gp_title(du, wet_gas), f"p/z ({du.label('pz')})")}


def cole_figure(plots: list[dict], du: DisplayUnits = OILFIELD, *, wet_gas: bool = False) -> dict:
    """Cole plot: F/Eg (and the modified F/(Eg + Efw) when given) against Gp, the points
    used for the trend, and the fitted trend line with its direction and significance."""
    traces = []
    gas = short_unit(du, "gas_bscf")
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
                        "x": du.values("gas_bscf", [gp[i] for i in idx]),
                        "y": du.values("gas_bscf", [ratio[i] for i in idx]),
                        "marker": {"color": colour, "symbol": symbol, "size": 8},
                        "hovertemplate": f"%{{x:.2f}} {gas}, %{{y:.1f}} {gas}<extra>{label}</extra>",
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
                    "x": du.values("gas_bscf", [x0, x1]),
                    "y": du.values(
                        "gas_bscf", [trend["intercept_bscf"] + trend["slope"] * x for x in (x0, x1)]
                    ),
                    "line": {"color": colour, "width": 2, "dash": "dash"},
                    "hoverinfo": "skip",
                }
            )
    return {"data": traces, "layout": _layout(gp_title(du, wet_gas), f"F/Eg ({du.label('gas_bscf')})")}
