"""The field page's time charts: pressure by well, production, and the estimate's history.

Pure functions from read models (services/fieldwork/history.py) and the stored result to plotly
figure dicts, in the display units ``du``."""

from __future__ import annotations

import calendar
import datetime as dt
from collections import defaultdict

from ..display import DisplayUnits
from ..templating import date_from_days
from .pz import (
    ABANDON_COLOUR,
    LINE_COLOUR,
    OILFIELD,
    SET_ASIDE_COLOUR,
    WELL_COLOURS,
    WELL_SYMBOLS,
    plain,
    short_unit,
)

GAS_COLOUR = "#c2571a"
CONDENSATE_COLOUR = "#3c8d5a"
WATER_COLOUR = "#1f5f8b"


def _layout(y_title: str, **extra) -> dict:
    return {
        "xaxis": {"title": {"text": "Date"}, "type": "date", "gridcolor": "#e3e7eb"},
        "yaxis": {"title": {"text": y_title}, "rangemode": "tozero", "gridcolor": "#e3e7eb"},
        "legend": {"orientation": "h", "y": -0.25},
        "margin": {"l": 60, "r": 60, "t": 20, "b": 60},
        "hovermode": "closest",
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
        **extra,
    }


def pressure_time_figure(detail: dict, surveys=(), du: DisplayUnits = OILFIELD) -> dict:
    """Survey pressure against time, one trace per well; surveys set aside (by the engineer
    or the outlier rule) drawn as crosses with their reason. Pressures at the datum when the
    stored estimate prepared them, else as measured at the gauge (``surveys``)."""
    points = (detail.get("prepared") or {}).get("points") or []
    status = {s["index"]: s for s in (detail.get("pz") or {}).get("points") or []}
    rows = []  # (well, date, pressure_psia, set-aside reason or None)
    if points:
        for p in points:
            s = status.get(p["index"])
            aside = (s and s["status"] != "used") or not p["included"]
            reason = (s or {}).get("reason") or p.get("reason") or "set aside"
            rows.append(
                (
                    p["well"] or "survey",
                    date_from_days(p["t_days"]),
                    p["p_datum_psia"],
                    reason if aside else None,
                )
            )
        where = "at the datum"
    else:
        for s in surveys:
            reason = (s.exclusion_reason or "set aside") if s.excluded else None
            rows.append((s.well, s.survey_date.isoformat(), s.pressure_psia, reason))
        where = "at the gauge"
    unit = short_unit(du, "pressure")
    by_well: dict[str, list] = defaultdict(list)
    aside = []
    for r in rows:
        (aside if r[3] is not None else by_well[r[0]]).append(r)
    traces = []
    for i, (well, pts) in enumerate(sorted(by_well.items())):
        traces.append(
            {
                "type": "scatter",
                "mode": "lines+markers",
                "name": plain(well),
                "x": [r[1] for r in pts],
                "y": du.values("pressure", [r[2] for r in pts]),
                "marker": {
                    "color": WELL_COLOURS[i % len(WELL_COLOURS)],
                    "symbol": WELL_SYMBOLS[i % len(WELL_SYMBOLS)],
                    "size": 7,
                },
                "line": {"color": WELL_COLOURS[i % len(WELL_COLOURS)], "width": 1},
                "hovertemplate": f"%{{x}}, %{{y:,.0f}} {unit}<extra>{plain(well)}</extra>",
            }
        )
    if aside:
        traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "set aside",
                "x": [r[1] for r in aside],
                "y": du.values("pressure", [r[2] for r in aside]),
                "text": [f"{plain(r[0])}: {plain(r[3])}" for r in aside],
                "marker": {
                    "color": SET_ASIDE_COLOUR,
                    "symbol": "x-thin-open",
                    "size": 10,
                    "line": {"width": 2},
                },
                "hovertemplate": f"%{{text}}<br>%{{x}}, %{{y:,.0f}} {unit}<extra></extra>",
            }
        )
    return {"data": traces, "layout": _layout(f"Pressure {where} ({du.label('pressure')})")}


def production_figure(series, du: DisplayUnits = OILFIELD) -> dict:
    """Monthly average rates (separator gas on the left axis, condensate and water on the
    right) and cumulative separator gas below, against time, as produced (no gas equivalents).
    ``series`` is a field_history.ProductionSeries."""
    months = [m.isoformat() for m in series.month]
    days = [calendar.monthrange(m.year, m.month)[1] for m in series.month]
    gas_rate = [g / d / 1000.0 for g, d in zip(series.gas_mscf, days, strict=True)]  # MMscf/d
    cum_bscf, total = [], 0.0
    for g in series.gas_mscf:
        total += g / 1e6
        cum_bscf.append(total)
    liquid = f"{short_unit(du, 'liquid_stb')}/d"
    gas_u = short_unit(du, "rate_mmscf_per_day")
    traces = [
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"separator gas rate ({gas_u})",
            "x": months,
            "y": du.values("rate_mmscf_per_day", gas_rate),
            "line": {"color": GAS_COLOUR, "width": 2, "shape": "hv"},
            "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {gas_u}<extra>separator gas</extra>",
        }
    ]
    liquids = []  # those the field produced, drawn against the right-hand axis
    for name, values, colour, dash in (
        ("condensate", series.condensate_stb, CONDENSATE_COLOUR, "solid"),
        ("water", series.water_stb, WATER_COLOUR, "dot"),
    ):
        if any(values):
            liquids.append(name)
            traces.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": f"{name} rate ({liquid})",
                    "x": months,
                    "y": du.values("liquid_stb", [v / d for v, d in zip(values, days, strict=True)]),
                    "yaxis": "y2",
                    "line": {"color": colour, "width": 1.5, "dash": dash, "shape": "hv"},
                    "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.1f}} {liquid}<extra>{name}</extra>",
                }
            )
    cum_u = short_unit(du, "gas_bscf")
    traces.append(
        {
            "type": "scatter",
            "mode": "lines",
            "name": f"cumulative separator gas ({cum_u})",
            "x": months,
            "y": du.values("gas_bscf", cum_bscf),
            "yaxis": "y3",
            "line": {"color": LINE_COLOUR, "width": 2},
            "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {cum_u}<extra>cumulative</extra>",
        }
    )
    layout = _layout(
        f"Separator gas rate<br>{du.label('rate_mmscf_per_day')}", margin={"l": 80, "r": 80, "t": 20, "b": 60}
    )
    layout["yaxis"]["domain"] = [0.42, 1.0]
    layout["xaxis"]["anchor"] = "y3"  # one date axis, under the lower panel
    if liquids:  # no right-hand axis for a field that produced neither condensate nor water
        layout["yaxis2"] = {
            "title": {"text": f"{', '.join(liquids).capitalize()}<br>{du.label('liquid_stb')} per day"},
            "overlaying": "y",
            "side": "right",
            "rangemode": "tozero",
            "showgrid": False,
            # plotly.js 4 lines an overlaying axis's ticks up with the gridlines of the axis it
            # overlays ("sync"), which gives ticks such as 157, 314, 471: ask for its own round ones
            "tickmode": "auto",
        }
    layout["yaxis3"] = {
        "title": {"text": f"Cumulative separator gas<br>{du.label('gas_bscf')}"},
        "domain": [0.0, 0.32],
        "anchor": "x",
        "rangemode": "tozero",
        "gridcolor": "#e3e7eb",
    }
    return {"data": traces, "layout": layout}


def history_figure(history, du: DisplayUnits = OILFIELD) -> dict:
    """The dynamic GIIP (best, with its low-high range) of every stored estimate against the
    time it was computed, with what triggered each recompute on hover; the EUR beside it.
    ``history`` is a list of field_history.HistoryRow, oldest first."""
    ok = [h for h in history if h.status == "ok" and h.giip_best_bscf is not None]
    gas = short_unit(du, "gas_bscf")
    when = [h.computed_at.strftime("%Y-%m-%d %H:%M:%S") for h in ok]
    best = du.values("gas_bscf", [h.giip_best_bscf for h in ok])
    low = du.values(
        "gas_bscf", [h.giip_low_bscf if h.giip_low_bscf is not None else h.giip_best_bscf for h in ok]
    )
    high = du.values(
        "gas_bscf", [h.giip_high_bscf if h.giip_high_bscf is not None else h.giip_best_bscf for h in ok]
    )
    text = [f"estimate {h.estimate_id}" + (f"<br>{plain(h.trigger)}" if h.trigger else "") for h in ok]
    traces = [
        {
            "type": "scatter",
            "mode": "lines+markers",
            "name": "GIIP best (P90-P10 bars)",
            "x": when,
            "y": best,
            "text": text,
            "customdata": [h.estimate_id for h in ok],
            "line": {"color": LINE_COLOUR, "width": 2, "shape": "hv"},
            "marker": {"color": LINE_COLOUR, "size": 8},
            "error_y": {
                "type": "data",
                "symmetric": False,
                "array": [hi - b for hi, b in zip(high, best, strict=True)],
                "arrayminus": [b - lo for lo, b in zip(low, best, strict=True)],
                "color": LINE_COLOUR,
                "thickness": 1.5,
                "width": 5,
            },
            "hovertemplate": f"%{{text}}<br>GIIP %{{y:,.1f}} {gas}<extra></extra>",
        }
    ]
    eur = [h for h in ok if h.eur_bscf is not None]
    if eur:
        traces.append(
            {
                "type": "scatter",
                "mode": "lines+markers",
                "name": "EUR at abandonment",
                "x": [h.computed_at.strftime("%Y-%m-%d %H:%M:%S") for h in eur],
                "y": du.values("gas_bscf", [h.eur_bscf for h in eur]),
                "line": {"color": ABANDON_COLOUR, "width": 1.5, "dash": "dash", "shape": "hv"},
                "marker": {"color": ABANDON_COLOUR, "symbol": "star", "size": 8},
                "hovertemplate": f"EUR %{{y:,.1f}} {gas}<extra></extra>",
            }
        )
    layout = _layout(f"Dynamic GIIP and EUR ({du.label('gas_bscf')})")
    layout["xaxis"]["title"]["text"] = "Computed (UTC)"
    layout["meta"] = {"n_estimates": len(ok)}  # none: the page says so instead of an empty chart
    if ok and (ok[-1].computed_at - ok[0].computed_at) < dt.timedelta(hours=1):
        # estimates minutes apart: show the day around them, not a millisecond axis
        mid = ok[0].computed_at
        layout["xaxis"]["range"] = [
            (mid - dt.timedelta(hours=12)).strftime("%Y-%m-%d %H:%M:%S"),
            (mid + dt.timedelta(hours=12)).strftime("%Y-%m-%d %H:%M:%S"),
        ]
    return {"data": traces, "layout": layout}
