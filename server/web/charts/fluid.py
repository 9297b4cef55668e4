"""Chart builders of the data pages: pure functions from read models to plotly figure dicts."""

from __future__ import annotations

from ...services.portfolio.fluid_data import FluidView
from ..display import DisplayUnits

CURVE_COLOUR = "#1f5f8b"
USED_COLOUR = "#c2571a"
LAB_COLOUR = "#3c8d5a"


def _layout(x_title: str, y_title: str, title: str) -> dict:
    axis = {"zeroline": False, "gridcolor": "#e3e7eb"}
    return {
        "title": {"text": title},
        "xaxis": {**axis, "title": {"text": x_title}, "rangemode": "tozero"},
        "yaxis": {**axis, "title": {"text": y_title}},
        "legend": {"orientation": "h", "y": -0.2},
        "margin": {"t": 40, "r": 20},
        "hovermode": "closest",
    }


def _line(name: str, x, y, colour: str, dash: str = "solid") -> dict:
    return {
        "type": "scatter",
        "mode": "lines",
        "name": name,
        "x": x,
        "y": y,
        "line": {"color": colour, "dash": dash},
    }


def fluid_figures(view: FluidView, du: DisplayUnits) -> tuple[dict, dict] | None:
    """(z against pressure, Bg against pressure), or None when there is no curve.

    Draws the correlation the estimate's z comes from (for the well-stream gas when
    condensate is corrected), the lab table's points, and, when the estimate uses the
    lab table, the z it interpolates (the correlation scaled beyond the table's ends).
    """
    c = view.curve
    if c is None:
        return None
    p_label = f"pressure, {du.label('pressure')}"
    x = du.values("pressure", c.pressure_psia)
    z_traces = [_line(f"z: {c.correlation_label}", x, [float(v) for v in c.z_correlation], CURVE_COLOUR)]
    bg_traces = [
        _line(f"Bg: {c.correlation_label}", x, du.values("bg", c.bg_correlation_rcf_per_scf), CURVE_COLOUR)
    ]
    if c.z_used is not None and c.bg_used_rcf_per_scf is not None:
        z_traces.append(
            _line("z used by the estimate (lab table)", x, [float(v) for v in c.z_used], USED_COLOUR, "dash")
        )
        bg_traces.append(
            _line(
                "Bg used by the estimate (lab table)",
                x,
                du.values("bg", c.bg_used_rcf_per_scf),
                USED_COLOUR,
                "dash",
            )
        )
    if view.lab_points:
        lx = du.values("pressure", [pt.pressure_psia for pt in view.lab_points])
        marker = {"color": LAB_COLOUR, "symbol": "diamond", "size": 9}
        z_traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "laboratory",
                "x": lx,
                "y": [pt.z_from_lab for pt in view.lab_points],
                "marker": marker,
            }
        )
        bg_traces.append(
            {
                "type": "scatter",
                "mode": "markers",
                "name": "laboratory",
                "x": lx,
                "y": du.values("bg", [pt.bg_from_lab_rcf_per_scf for pt in view.lab_points]),
                "marker": marker,
            }
        )
    t = f"{du.show('temperature', view.reservoir_temperature_degF)} {du.label('temperature')}"
    z_fig = {"data": z_traces, "layout": _layout(p_label, "z-factor", f"z-factor at {t}")}
    bg_fig = {
        "data": bg_traces,
        "layout": _layout(p_label, f"Bg, {du.label('bg')}", f"Gas formation volume factor at {t}")
        | {"yaxis": {"title": {"text": f"Bg, {du.label('bg')}"}, "type": "log", "gridcolor": "#e3e7eb"}},
    }
    return z_fig, bg_fig
