"""The forecast's charts: rate and cumulative gas against time (history and the low, best and
high cases), each well's deliverability fit with its test data, and the portfolio's stacked
yearly profile.

Pure functions from the stored forecast (``estimate.detail["forecast"]``, services/forecast.py)
and read models to plotly figure dicts in the display units ``du``; every name a user typed
(wells, fields) is escaped with :func:`plain`."""

from __future__ import annotations

import calendar

import numpy as np

from ..display import DisplayUnits
from ..templating import date_from_days
from .pz import LINE_COLOUR, OILFIELD, WELL_COLOURS, WELL_SYMBOLS, plain, short_unit

HISTORY_COLOUR = "#555555"
#: Okabe & Ito (2008) colour-blind-safe colours, with a dash pattern each as well.
CASE_STYLE = {
    "low": ("#d55e00", "dot", "low (P90)"),
    "best": ("#0072b2", "solid", "best (P50)"),
    "high": ("#009e73", "dash", "high (P10)"),
}


def _layout(**extra) -> dict:
    return {
        "xaxis": {"title": {"text": "Date"}, "type": "date", "gridcolor": "#e3e7eb", "anchor": "y2"},
        "legend": {"orientation": "h", "y": -0.2},
        "margin": {"l": 80, "r": 30, "t": 20, "b": 60},
        "hovermode": "closest",
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
        **extra,
    }


def _month_label(t_days: float) -> str:
    """The month a month-end time closes (an exclusive end is the first of the next month)."""
    return date_from_days(t_days - 1)[:7]


def forecast_figure(forecast: dict | None, series=None, du: DisplayUnits = OILFIELD) -> dict:
    """Monthly field rate (top) and cumulative gas (below) against time: the production history
    (``series``, a fieldwork.history.ProductionSeries, separator gas) and each stored case."""
    rate_u = short_unit(du, "rate_mmscf_per_day")
    cum_u = short_unit(du, "gas_bscf")
    traces = []
    if series is not None and len(series.month):
        months = [m.isoformat()[:7] for m in series.month]
        days = [calendar.monthrange(m.year, m.month)[1] for m in series.month]
        rate = [g / d / 1000.0 for g, d in zip(series.gas_mscf, days, strict=True)]
        cum = np.cumsum(np.asarray(series.gas_mscf, float)) / 1e6
        history = {"color": HISTORY_COLOUR, "width": 1.5}
        traces += [
            {
                "type": "scatter",
                "mode": "lines",
                "name": "history",
                "legendgroup": "history",
                "x": months,
                "y": du.values("rate_mmscf_per_day", rate),
                "line": history | {"shape": "hv"},
                "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {rate_u}<extra>history</extra>",
            },
            {
                "type": "scatter",
                "mode": "lines",
                "name": "history",
                "legendgroup": "history",
                "showlegend": False,
                "x": months,
                "y": du.values("gas_bscf", cum.tolist()),
                "yaxis": "y2",
                "line": history,
                "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {cum_u}<extra>history</extra>",
            },
        ]
    for p in (forecast or {}).get("profiles") or []:
        colour, dash, name = CASE_STYLE.get(p["case"], (LINE_COLOUR, "solid", plain(p["case"])))
        x = [_month_label(t) for t in p["month_end_t_days"]]
        rate = [None if q is None else q / 1000.0 for q in p["rate_mscf_per_day"]]
        line = {"color": colour, "width": 2, "dash": dash}
        traces += [
            {
                "type": "scatter",
                "mode": "lines",
                "name": name,
                "legendgroup": p["case"],
                "x": x,
                "y": du.values("rate_mmscf_per_day", rate),
                "line": line | {"shape": "hv"},
                "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {rate_u}<extra>{name}</extra>",
            },
            {
                "type": "scatter",
                "mode": "lines",
                "name": name,
                "legendgroup": p["case"],
                "showlegend": False,
                "x": x,
                "y": du.values("gas_bscf", p["cumulative_bscf"]),
                "yaxis": "y2",
                "line": line,
                "hovertemplate": f"%{{x|%Y-%m}}: %{{y:,.2f}} {cum_u}<extra>{name}</extra>",
            },
        ]
    layout = _layout()
    layout["yaxis"] = {
        "title": {"text": f"Field gas rate<br>{du.label('rate_mmscf_per_day')}"},
        "domain": [0.45, 1.0],
        "rangemode": "tozero",
        "gridcolor": "#e3e7eb",
    }
    layout["yaxis2"] = {
        "title": {"text": f"Cumulative gas<br>{du.label('gas_bscf')}"},
        "domain": [0.0, 0.37],
        "anchor": "x",
        "rangemode": "tozero",
        "gridcolor": "#e3e7eb",
    }
    layout["meta"] = {"cases": [p["case"] for p in (forecast or {}).get("profiles") or []]}
    return {"data": traces, "layout": layout}


def deliverability_figure(
    deliverability: list[dict], tests: dict[str, list], du: DisplayUnits = OILFIELD
) -> dict:
    """Each well's back-pressure fit q = C (p̄² − p_wf²)^n (Rawlins and Schellhardt 1936) as a
    line on log-log axes, with its multi-rate test points (``tests``: well -> rows with
    ``rate_mscf_per_day``, ``flowing_bhp_psia``, ``static_pressure_psia``)."""
    p_u = short_unit(du, "pressure")
    rate_u = short_unit(du, "rate_mscf_per_day")
    k = du.value("pressure", 1.0)  # display pressure per psi (absolute units scale linearly)
    traces = []
    wells = sorted({d["well"] for d in deliverability if d.get("well")} | set(tests))
    for i, well in enumerate(wells):
        colour = WELL_COLOURS[i % len(WELL_COLOURS)]
        rows = tests.get(well, [])
        dp2 = [r["static_pressure_psia"] ** 2 - r["flowing_bhp_psia"] ** 2 for r in rows]
        if rows:
            traces.append(
                {
                    "type": "scatter",
                    "mode": "markers",
                    "name": f"{plain(well)} tests",
                    "legendgroup": plain(well),
                    "x": [d * k * k for d in dp2],
                    "y": du.values("rate_mscf_per_day", [r["rate_mscf_per_day"] for r in rows]),
                    "text": [str(r.get("test_date", "")) for r in rows],
                    "marker": {"color": colour, "symbol": WELL_SYMBOLS[i % len(WELL_SYMBOLS)], "size": 8},
                    "hovertemplate": f"%{{text}}: %{{y:,.0f}} {rate_u} at Δp² %{{x:.3s}} {p_u}²"
                    f"<extra>{plain(well)}</extra>",
                }
            )
        fit = next((d for d in deliverability if d.get("well") == well), None)
        # A fit in the pseudo-pressure form is a line on ln q against ln Δm, not Δp²: not drawn here.
        in_p2 = (fit or {}).get("form", "pressure_squared") == "pressure_squared"
        if fit and in_p2 and fit.get("c_mscf_per_day_psi2n") and fit.get("n"):
            lo = min(dp2) / 3 if dp2 else 1e5
            hi = max(dp2) * 3 if dp2 else 2.5e7
            x = np.geomspace(max(lo, 1.0), max(hi, lo * 10), 30)
            q = fit["c_mscf_per_day_psi2n"] * x ** fit["n"]
            traces.append(
                {
                    "type": "scatter",
                    "mode": "lines",
                    "name": f"{plain(well)}: C {fit['c_mscf_per_day_psi2n']:.3g}, n {fit['n']:.2f}",
                    "legendgroup": plain(well),
                    "x": (x * k * k).tolist(),
                    "y": du.values("rate_mscf_per_day", q.tolist()),
                    "line": {"color": colour, "width": 1.5},
                    "hovertemplate": f"%{{y:,.0f}} {rate_u}<extra>{plain(well)} fit</extra>",
                }
            )
    layout = {
        "xaxis": {"title": {"text": f"p̄² − p_wf² ({p_u}²)"}, "type": "log", "gridcolor": "#e3e7eb"},
        "yaxis": {
            "title": {"text": f"Gas rate ({du.label('rate_mscf_per_day')})"},
            "type": "log",
            "gridcolor": "#e3e7eb",
        },
        "legend": {"orientation": "h", "y": -0.25},
        "margin": {"l": 80, "r": 30, "t": 20, "b": 60},
        "hovermode": "closest",
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
    }
    return {"data": traces, "layout": layout}


def portfolio_profile_figure(profile, du: DisplayUnits = OILFIELD) -> dict:
    """Best-case gas per year stacked by field, with the low and high totals as lines.
    ``profile`` is a services.portfolio.profiles.PortfolioProfile."""
    years = [str(y) for y in profile.years]
    gas_u = short_unit(du, "gas_bscf")
    traces = [
        {
            "type": "bar",
            "name": plain(name),
            "x": years,
            "y": du.values("gas_bscf", best),
            "hovertemplate": f"%{{x}}: %{{y:,.2f}} {gas_u}<extra>{plain(name)}</extra>",
        }
        for name, best in profile.best_by_field
    ]
    for case in ("low", "high"):
        colour, dash, name = CASE_STYLE[case]
        traces.append(
            {
                "type": "scatter",
                "mode": "lines+markers",
                "name": f"total {name}",
                "x": years,
                "y": du.values("gas_bscf", getattr(profile, f"{case}_total")),
                "line": {"color": colour, "dash": dash, "width": 2},
                "hovertemplate": f"%{{x}}: %{{y:,.2f}} {gas_u}<extra>total {name}</extra>",
            }
        )
    layout = {
        "barmode": "stack",
        "xaxis": {"title": {"text": "Year"}, "type": "category"},
        "yaxis": {
            "title": {"text": f"Gas per year ({du.label('gas_bscf')})"},
            "rangemode": "tozero",
            "gridcolor": "#e3e7eb",
        },
        "legend": {"orientation": "h", "y": -0.25},
        "margin": {"l": 80, "r": 30, "t": 20, "b": 60},
        "hovermode": "closest",
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#fbfcfd",
        "meta": {"n_fields": len(profile.best_by_field)},
    }
    return {"data": traces, "layout": layout}
