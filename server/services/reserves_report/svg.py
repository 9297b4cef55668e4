"""Static charts of the report as hand-written SVG (no browser, no plotting library).

WeasyPrint draws SVG itself, so the charts stay vector graphics in the PDF, cost a few
milliseconds each and add no dependency; docs/report.md says why this route was chosen.
Every text put into a chart goes through ``html.escape``; the result is ``Markup``.
"""

from __future__ import annotations

import math
from html import escape

from markupsafe import Markup

FONT = 'font-family="DejaVu Sans, sans-serif"'
INK, GRID, MUTED = "#22313f", "#d9dee3", "#6b747b"
UP, DOWN, TOTAL = "#009e73", "#d55e00", "#0072b2"  # Okabe & Ito (2008) colour-blind-safe colours
CASE_COLOURS = {"low": "#d55e00", "best": "#0072b2", "high": "#009e73"}


def nice_ticks(low: float, high: float, count: int = 5) -> list[float]:
    """Round tick values covering [low, high] (steps of 1, 2 or 5 times a power of ten)."""
    if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
        high = low + 1.0
    raw = (high - low) / count
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 5, 10) if m * power >= raw)
    start = math.floor(low / step) * step
    ticks, v = [], start
    while v <= high + step * 1e-9:
        ticks.append(round(v, 10))
        v += step
    if ticks[-1] < high:
        ticks.append(round(v, 10))
    return ticks


def _fmt(v: float) -> str:
    return f"{v:,.0f}" if abs(v) >= 100 else f"{v:,.3g}"


class _Frame:
    """A plot area with linear axes: data coordinates to SVG pixels."""

    def __init__(self, width, height, xs, ys, left=64, right=16, top=16, bottom=44):
        self.w, self.h = width, height
        self.x0, self.x1, self.y0, self.y1 = left, width - right, top, height - bottom
        self.xt, self.yt = xs, ys

    def x(self, v):
        lo, hi = self.xt[0], self.xt[-1]
        return self.x0 + (v - lo) / (hi - lo) * (self.x1 - self.x0)

    def y(self, v):
        lo, hi = self.yt[0], self.yt[-1]
        return self.y1 - (v - lo) / (hi - lo) * (self.y1 - self.y0)

    def axes(self, x_title: str, y_title: str, x_labels=True) -> list[str]:
        out = []
        for t in self.yt:
            y = self.y(t)
            out.append(f'<line x1="{self.x0}" x2="{self.x1}" y1="{y:.1f}" y2="{y:.1f}" stroke="{GRID}"/>')
            out.append(
                f'<text x="{self.x0 - 4}" y="{y + 3:.1f}" text-anchor="end" font-size="9">{_fmt(t)}</text>'
            )
        if x_labels:
            for t in self.xt:
                x = self.x(t)
                out.append(
                    f'<line x1="{x:.1f}" x2="{x:.1f}" y1="{self.y1}" y2="{self.y1 + 4}" stroke="{INK}"/>'
                )
                out.append(
                    f'<text x="{x:.1f}" y="{self.y1 + 14}" text-anchor="middle" font-size="9">'
                    f"{_fmt(t)}</text>"
                )
        out.append(f'<line x1="{self.x0}" x2="{self.x1}" y1="{self.y1}" y2="{self.y1}" stroke="{INK}"/>')
        out.append(f'<line x1="{self.x0}" x2="{self.x0}" y1="{self.y0}" y2="{self.y1}" stroke="{INK}"/>')
        if x_title:
            out.append(
                f'<text x="{self.x1:.1f}" y="{self.y1 + 26}" text-anchor="end" font-size="9">'
                f"{escape(x_title)}</text>"
            )
        out.append(
            f'<text x="{self.x0 - 4}" y="{self.y0 - 5}" text-anchor="end" font-size="9">'
            f"{escape(y_title)}</text>"
        )
        return out


def _svg(width: int, height: int, parts: list[str], label: str) -> Markup:
    body = "".join(parts)
    return Markup(  # noqa: S704 - every text inside was escaped above
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
        f'viewBox="0 0 {width} {height}" role="img" aria-label="{escape(label)}" {FONT} fill="{INK}">'
        f"{body}</svg>"
    )


def waterfall_svg(steps: list[tuple[str, float]], title: str, width: int = 660, height: int = 250) -> Markup:
    """Opening, signed changes and closing [Bscf] as a waterfall: changes float from the running total."""
    if not steps:
        return Markup("")
    running, spans = 0.0, []
    for i, (name, v) in enumerate(steps):
        if i == 0 or i == len(steps) - 1:
            spans.append((name, 0.0, v, v, TOTAL))
            running = v
        else:
            spans.append((name, running, running + v, v, UP if v >= 0 else DOWN))
            running += v
    lo = min(0.0, *(min(a, b) for _, a, b, _, _ in spans))
    hi = max(0.0, *(max(a, b) for _, a, b, _, _ in spans))
    f = _Frame(width, height, [0, len(spans)], nice_ticks(lo, hi), bottom=56)
    parts = f.axes("", "Bscf", x_labels=False)
    slot = (f.x1 - f.x0) / len(spans)
    for i, (name, a, b, v, colour) in enumerate(spans):
        x = f.x0 + slot * (i + 0.15)
        top, bottom = f.y(max(a, b)), f.y(min(a, b))
        parts.append(
            f'<rect x="{x:.1f}" y="{top:.1f}" width="{slot * 0.7:.1f}" height="{max(bottom - top, 0.8):.1f}" '
            f'fill="{colour}"/>'
        )
        parts.append(
            f'<text x="{x + slot * 0.35:.1f}" y="{top - 3:.1f}" text-anchor="middle" font-size="9">'
            f"{round(v, 2) + 0.0:+,.2f}</text>"
            if 0 < i < len(spans) - 1
            else f'<text x="{x + slot * 0.35:.1f}" y="{top - 3:.1f}" text-anchor="middle" font-size="9">'
            f"{v:,.2f}</text>"
        )
        for j, word in enumerate(_wrap(name, 14)):
            parts.append(
                f'<text x="{x + slot * 0.35:.1f}" y="{f.y1 + 12 + 10 * j}" text-anchor="middle" '
                f'font-size="8.5">{escape(word)}</text>'
            )
    return _svg(width, height, parts, title)


def _wrap(text: str, n: int) -> list[str]:
    lines, cur = [], ""
    for w in text.split():
        if cur and len(cur) + 1 + len(w) > n:
            lines.append(cur)
            cur = w
        else:
            cur = f"{cur} {w}".strip()
    return [*lines, cur] if cur else lines


def pz_svg(
    points: list[tuple[float, float, bool]],
    intercept_psia: float | None,
    line_giip_bscf: float | None,
    basis_giip_bscf: float | None,
    produced_bscf: float,
    width: int = 660,
    height: int = 260,
) -> Markup:
    """p/z [psia] against cumulative gas [Bscf]: used points (filled), set-aside points (crosses),
    the straight p/z line to p/z = 0, the basis GIIP on the axis and the gas produced to date."""
    if not points and intercept_psia is None:
        return Markup("")
    xs = [p[0] for p in points] + [produced_bscf]
    ys = [p[1] for p in points]
    if intercept_psia is not None and line_giip_bscf is not None:
        xs.append(line_giip_bscf)
        ys.append(intercept_psia)
    if basis_giip_bscf is not None:
        xs.append(basis_giip_bscf)
    f = _Frame(width, height, nice_ticks(0.0, max(xs) or 1.0), nice_ticks(0.0, max(ys or [1.0])))
    parts = f.axes("Bscf", "psia")
    if intercept_psia is not None and line_giip_bscf is not None:
        parts.append(
            f'<line x1="{f.x(0):.1f}" y1="{f.y(intercept_psia):.1f}" x2="{f.x(line_giip_bscf):.1f}" '
            f'y2="{f.y(0):.1f}" stroke="{INK}" stroke-width="1.6"/>'
        )
    for gp, pz, used in points:
        x, y = f.x(gp), f.y(pz)
        if used:
            parts.append(f'<circle cx="{x:.1f}" cy="{y:.1f}" r="3.2" fill="{TOTAL}"/>')
        else:
            parts.append(
                f'<path d="M{x - 3:.1f} {y - 3:.1f}L{x + 3:.1f} {y + 3:.1f}M{x - 3:.1f} {y + 3:.1f}'
                f'L{x + 3:.1f} {y - 3:.1f}" stroke="{MUTED}" stroke-width="1.4"/>'
            )
    if basis_giip_bscf is not None:
        x = f.x(basis_giip_bscf)
        parts.append(f'<path d="M{x:.1f} {f.y1 - 10}L{x - 5:.1f} {f.y1}L{x + 5:.1f} {f.y1}Z" fill="{DOWN}"/>')
        parts.append(
            f'<text x="{x:.1f}" y="{f.y1 - 13}" text-anchor="middle" font-size="9">basis GIIP</text>'
        )
    x = f.x(produced_bscf)
    parts.append(
        f'<line x1="{x:.1f}" x2="{x:.1f}" y1="{f.y0}" y2="{f.y1}" stroke="{MUTED}" stroke-dasharray="4 3"/>'
    )
    return _svg(width, height, parts, "p/z against cumulative gas")


def cases_svg(
    produced_bscf: float, eur_bscf: dict[str, float | None], width: int = 660, height: int = 150
) -> Markup:
    """Each forecast case's cumulative gas at the commercial limit [Bscf]: produced to the
    effective date (grey) and the remaining volume (the case's colour), as horizontal bars."""
    cases = [(c, v) for c, v in eur_bscf.items() if v is not None]
    if not cases:
        return Markup("")
    f = _Frame(
        width,
        height,
        nice_ticks(0.0, max(max(v for _, v in cases), produced_bscf) or 1.0),
        [0, 1],
        left=64,
        bottom=36,
    )
    parts = []
    for t in f.xt:
        x = f.x(t)
        parts.append(f'<line x1="{x:.1f}" x2="{x:.1f}" y1="{f.y0}" y2="{f.y1}" stroke="{GRID}"/>')
        parts.append(f'<text x="{x:.1f}" y="{f.y1 + 12}" text-anchor="middle" font-size="9">{_fmt(t)}</text>')
    band = (f.y1 - f.y0) / len(cases)
    for i, (case, eur) in enumerate(cases):
        y = f.y0 + band * (i + 0.2)
        done = min(produced_bscf, eur)
        parts.append(
            f'<text x="{f.x0 - 6}" y="{y + band * 0.4:.1f}" text-anchor="end" font-size="10">'
            f"{escape(case)}</text>"
        )
        parts.append(
            f'<rect x="{f.x(0):.1f}" y="{y:.1f}" width="{f.x(done) - f.x(0):.1f}" '
            f'height="{band * 0.6:.1f}" fill="#b8bec4"/>'
        )
        parts.append(
            f'<rect x="{f.x(done):.1f}" y="{y:.1f}" width="{max(f.x(eur) - f.x(done), 0):.1f}" '
            f'height="{band * 0.6:.1f}" fill="{CASE_COLOURS.get(case, TOTAL)}"/>'
        )
        parts.append(f'<text x="{f.x(eur) + 4:.1f}" y="{y + band * 0.4:.1f}" font-size="9">{eur:,.2f}</text>')
    parts.append(f'<text x="{f.x1:.1f}" y="{f.y1 + 24}" text-anchor="end" font-size="9">Bscf</text>')
    return _svg(width, height, parts, "forecast cases")


def yearly_svg(yearly: dict[str, list[dict]], width: int = 660, height: int = 130) -> Markup:
    """Each forecast case's gas per calendar year [Bscf] as a line with markers (the frozen
    yearly rows: ``{"year", "gas_bscf", ...}``); empty when no case has yearly rows."""
    series = {
        c: [(r["year"], r["gas_bscf"]) for r in rows if r.get("gas_bscf") is not None]
        for c, rows in yearly.items()
        if rows
    }
    series = {c: pts for c, pts in series.items() if pts}
    if not series:
        return Markup("")
    years = [y for pts in series.values() for y, _ in pts]
    top = max(v for pts in series.values() for _, v in pts)
    x_ticks = nice_ticks(min(years), max(years) if max(years) > min(years) else min(years) + 1)
    f = _Frame(width, height, x_ticks, nice_ticks(0.0, top or 1.0), left=64, bottom=30)
    parts = f.axes("year", "Bscf a year", x_labels=False)
    for t in f.xt:
        if float(t).is_integer():  # years as years: no thousands separator, no half years
            parts.append(
                f'<text x="{f.x(t):.1f}" y="{f.y1 + 12}" text-anchor="middle" font-size="9">{int(t)}</text>'
            )
    for case, pts in series.items():
        colour = CASE_COLOURS.get(case, TOTAL)
        path = " ".join(f"{f.x(y):.1f},{f.y(v):.1f}" for y, v in pts)
        parts.append(f'<polyline points="{path}" fill="none" stroke="{colour}" stroke-width="1.5"/>')
        x, y = f.x(pts[0][0]), f.y(pts[0][1])
        parts.append(
            f'<text x="{x + 4:.1f}" y="{y - 4:.1f}" font-size="9" fill="{colour}">{escape(case)}</text>'
        )
    return _svg(width, height, parts, "forecast gas per year and case")
