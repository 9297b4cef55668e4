"""Dimensionless aquifer solutions: van Everdingen-Hurst influx W_D(t_D) and pressure P_D(t_D).

The constant-terminal-pressure influx W_D of a radial (infinite or bounded) or linear
(bounded) aquifer and the constant-terminal-rate pressure P_D at r_D = 1 are computed by
numerical Laplace inversion (:mod:`.laplace`) of their transforms, tabulated once per
geometry on a log grid with the exact log-log slope, and interpolated by cubic
Hermite polynomials in log-log space (error below 1e-7 relative; tested against
mpmath). The Edwardson et al. (1962) rational fit of the infinite radial W_D is
offered as the verified closed form.

Laplace-space solutions (van Everdingen & Hurst 1949; domain reference §3.1):

    infinite radial    W̄_D(s) = K1(√s) / (s^(3/2) K0(√s))
    bounded radial     W̄_D(s) = [I1(x r)K1(x) − K1(x r)I1(x)] / (s^(3/2) [K1(x r)I0(x) + I1(x r)K0(x)]),
                       x = √s, r = r_eD (no flow at the outer radius)
    bounded linear     W̄_D(s) = tanh(√s) / s^(3/2)      (no flow at distance L; t_D on L)
    infinite linear    W_D = 2 √(t_D/π)                  (exact; independent of the reference length)
    P_D, r_D = 1       P̄_D(s) = K0(√s) / (s^(3/2) K1(√s))

Bessel functions are evaluated in their exponentially scaled forms (``kve``, ``ive``)
and combined so that no factor can overflow.

References
----------
van Everdingen, A.F. and Hurst, W. (1949). The application of the Laplace
    transformation to flow problems in reservoirs. Trans. AIME 186, 305-324.
    doi:10.2118/949305-G
Edwardson, M.J. et al. (1962). Calculation of formation temperature disturbances
    caused by mud circulation. JPT 14(4), 416-426. SPE-124-PA.
Dake, L.P. (1978). Fundamentals of Reservoir Engineering, Elsevier, §9.2 (W_D maxima).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np
from scipy import special

from ..errors import InputRangeError
from .laplace import TALBOT_NODES, invert_talbot

GEOMETRIES = ("radial", "linear")
#: Grid density of the tables [points per decade of t_D].
POINTS_PER_DECADE = 24
TD_TABLE_MIN = 1e-8
TD_TABLE_MAX_INFINITE = 1e12


#: The tables every history match uses, computed once and shipped with the package
#: (``wd_tables.npz`` beside this module; rebuild with
#: ``python -m server.engine.aquifer.dimensionless``; a test rebuilds and compares them).
SHIPPED_TABLES_PATH = Path(__file__).with_name("wd_tables.npz")
#: r_eD of the shipped radial W_D tables (None: infinite); the history match's grid.
SHIPPED_RADIAL_REDS = (None, 10.0, 5.0, 3.0, 2.0)
PD_RADIAL_KEY = "pd_radial_infinite"


def _tables_recipe() -> str:
    """What the shipped tables depend on: a file made with other settings is not used."""
    return (
        f"points/decade={POINTS_PER_DECADE} td_min={TD_TABLE_MIN!r} "
        f"td_max={TD_TABLE_MAX_INFINITE!r} talbot={TALBOT_NODES}"
    )


def _tanh_stable(z):
    e = np.exp(-2.0 * z)  # Re z >= 0 here, so |e| <= 1
    return (1.0 - e) / (1.0 + e)


def _radial_bounded_ratio(x, red: float):
    """[I1(xr)K1(x) − K1(xr)I1(x)] / [K1(xr)I0(x) + I1(xr)K0(x)] without overflow.

    With I_n(z) = ive(n, z) e^{Re z} and K_n(z) = kve(n, z) e^{-z}, dividing through by
    e^{Re(xr) - x} leaves the factor q = exp((Re x + x) - (Re xr + xr)), |q| <= 1.
    """
    y = red * x
    q = np.exp((x.real + x) - (y.real + y))
    i1y, k1y = special.ive(1, y), special.kve(1, y)
    i0x, k0x, i1x, k1x = special.ive(0, x), special.kve(0, x), special.ive(1, x), special.kve(1, x)
    return (i1y * k1x - k1y * i1x * q) / (i1y * k0x + k1y * i0x * q)


def wd_laplace(s, geometry: str = "radial", red: float | None = None):
    """Laplace transform of the dimensionless influx W̄_D(s) (see the module docstring)."""
    s = np.asarray(s)
    x = np.sqrt(s)
    if geometry == "radial":
        if red is None:
            return special.kve(1, x) / (s * x * special.kve(0, x))
        return _radial_bounded_ratio(x, float(red)) / (s * x)
    if geometry == "linear":
        if red is None:
            return 1.0 / (s * x)
        return _tanh_stable(x) / (s * x)
    raise ValueError(f"unknown aquifer geometry {geometry!r}; choose one of {GEOMETRIES}")


def wd_rate_laplace(s, geometry: str = "radial", red: float | None = None):
    """Laplace transform of dW_D/dt_D, which is s W̄_D(s) since W_D(0) = 0."""
    return np.asarray(s) * wd_laplace(s, geometry, red)


def pd_laplace_radial_infinite(s):
    """P̄_D(s) = K0(√s)/(s^(3/2) K1(√s)): constant-rate pressure at r_D = 1, infinite radial."""
    s = np.asarray(s)
    x = np.sqrt(s)
    return special.kve(0, x) / (s * x * special.kve(1, x))


def wd_max(geometry: str, red: float | None) -> float | None:
    """Plateau of W_D for a bounded aquifer: ½(r_eD² − 1) radial, 1 linear (Dake eqs. 9.11-9.12)."""
    if red is None:
        return None
    if geometry == "radial":
        return 0.5 * (red * red - 1.0)
    if geometry == "linear":
        return 1.0
    raise ValueError(f"unknown aquifer geometry {geometry!r}; choose one of {GEOMETRIES}")


def wd_edwardson(td):
    """Infinite radial W_D by the rational fit of Edwardson et al. (1962).

    Parameters
    ----------
    td : float or array
        Dimensionless time t_D >= 0.

    Returns
    -------
    W_D : float or ndarray. Within 0.02 % of the exact solution for t_D <= 100, 0.07 %
    at the switch-over t_D = 200, 0.13 % at 1e5 (domain reference §3.1, check value 18).

    References
    ----------
    Edwardson et al. (1962), JPT 14(4), 416-426, SPE-124-PA.
    """
    t = np.asarray(td, float)
    if np.any(t < 0):
        raise InputRangeError("dimensionless time must not be negative")
    rt = np.sqrt(t)
    small = 2.0 * np.sqrt(t / np.pi)
    mid = (1.12838 * rt + 1.19328 * t + 0.269872 * t * rt + 0.00855294 * t * t) / (
        1.0 + 0.616599 * rt + 0.0413008 * t
    )
    with np.errstate(divide="ignore", invalid="ignore"):
        late = (-4.29881 + 2.02566 * t) / np.log(t)
    out = np.where(t < 0.01, small, np.where(t <= 200.0, mid, late))
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class DimensionlessTable:
    """A positive, increasing dimensionless function f(t_D), tabulated in log-log space.

    Nodes are uniform in ln t_D; between them f is the cubic Hermite polynomial through
    the node values and exact slopes. Below the grid f follows its short-time power law
    (slope ½ in log-log); above it a bounded function stays at its plateau and an
    unbounded one raises.
    """

    name: str
    log_td: np.ndarray  # uniform spacing
    log_f: np.ndarray
    slope: np.ndarray  # d ln f / d ln t_D at the nodes
    plateau: float | None

    def log_value_and_slope(self, log_td):
        """(ln f, d ln f / d ln t_D) at ln t_D (any array shape)."""
        return self._evaluate(log_td, True)

    def _evaluate(self, log_td, with_slope: bool):
        """ln f at ln t_D and, ``with_slope``, d ln f / d ln t_D (else None): the slope's
        arithmetic is skipped when only the value is wanted (a kernel column, issue 17)."""
        x = np.asarray(log_td, float)
        x0, x1 = self.log_td[0], self.log_td[-1]
        if self.plateau is None and np.any(x > x1):
            raise InputRangeError(
                f"{self.name}: t_D = {np.exp(np.max(x)):.3g} is beyond the table (max {np.exp(x1):.3g})"
            )
        n = self.log_td.size
        h = (x1 - x0) / (n - 1)
        xc = np.clip(x, x0, x1)
        i = np.minimum(((xc - x0) / h).astype(np.intp), n - 2)
        u = (xc - self.log_td[i]) / h
        y0, y1 = self.log_f[i], self.log_f[i + 1]
        m0, m1 = self.slope[i] * h, self.slope[i + 1] * h
        u2 = u * u
        u3 = u2 * u
        y = (2 * u3 - 3 * u2 + 1) * y0 + (u3 - 2 * u2 + u) * m0 + (3 * u2 - 2 * u3) * y1 + (u3 - u2) * m1
        d = None
        if with_slope:
            d = (6 * (u2 - u) * (y0 - y1) + (3 * u2 - 4 * u + 1) * m0 + (3 * u2 - 2 * u) * m1) / h
        below = x < x0
        if np.any(below):
            y = np.where(below, self.log_f[0] + 0.5 * (x - x0), y)
            d = np.where(below, 0.5, d) if with_slope else None
        above = x > x1
        if np.any(above):
            y = np.where(above, self.log_f[-1], y)
            d = np.where(above, 0.0, d) if with_slope else None
        return y, d

    def log_value_and_slope_at(self, log_td: float) -> tuple[float, float]:
        """:meth:`log_value_and_slope` at one point, in plain floats: the same operations in
        the same order (so the same bits) without the array calls, which cost 20x the
        arithmetic for one point (the history match asks for one point at a time)."""
        x = float(log_td)
        x0, x1 = float(self.log_td[0]), float(self.log_td[-1])
        if x < x0 or x > x1:
            y, d = self.log_value_and_slope(x)
            return float(y), float(d)
        n = self.log_td.size
        h = (x1 - x0) / (n - 1)
        i = min(int((x - x0) / h), n - 2)
        u = (x - float(self.log_td[i])) / h
        y0, y1 = float(self.log_f[i]), float(self.log_f[i + 1])
        m0, m1 = float(self.slope[i]) * h, float(self.slope[i + 1]) * h
        u2 = u * u
        u3 = u2 * u
        y = (2 * u3 - 3 * u2 + 1) * y0 + (u3 - 2 * u2 + u) * m0 + (3 * u2 - 2 * u3) * y1 + (u3 - u2) * m1
        d = (6 * (u2 - u) * (y0 - y1) + (3 * u2 - 4 * u + 1) * m0 + (3 * u2 - 2 * u) * m1) / h
        return y, d

    def __call__(self, td):
        t = np.asarray(td, float)
        if np.any(t <= 0):
            raise InputRangeError(f"{self.name}: t_D must be > 0")
        y, _ = self._evaluate(np.log(t), False)
        out = np.exp(y)
        return float(out) if out.ndim == 0 else out


def _build_table(name, f_bar, rate_bar, td_max: float, plateau: float | None) -> DimensionlessTable:
    decades = np.log10(td_max / TD_TABLE_MIN)
    n = int(np.ceil(decades * POINTS_PER_DECADE)) + 1
    td = np.exp(np.linspace(np.log(TD_TABLE_MIN), np.log(td_max), n))
    f = invert_talbot(f_bar, td)
    rate = invert_talbot(rate_bar, td)
    if plateau is not None:
        # Round-off near the plateau must not make the tabulated curve decrease.
        f = np.minimum(np.maximum.accumulate(f), plateau)
        f[-1] = plateau
        rate[-1] = 0.0
    slope = np.maximum(td * rate / f, 0.0)
    log_td = np.linspace(np.log(TD_TABLE_MIN), np.log(td_max), n)
    return DimensionlessTable(name, log_td, np.log(f), slope, plateau)


def _table_key(geometry: str, red: float | None) -> str:
    return f"wd_{geometry}_" + ("infinite" if red is None else f"{float(red):g}")


@lru_cache(maxsize=1)
def _shipped_tables() -> dict:
    """The shipped tables by key ({} when the file is missing or made with other settings)."""
    try:
        with np.load(SHIPPED_TABLES_PATH, allow_pickle=False) as data:
            if str(data["recipe"]) != _tables_recipe():
                return {}
            return {k: data[k] for k in data.files}
    except (OSError, KeyError, ValueError):
        return {}


def _shipped_table(key: str, name: str, plateau: float | None) -> DimensionlessTable | None:
    data = _shipped_tables()
    if key + ".log_f" not in data:
        return None
    log_td = data[key + ".log_td"]
    return DimensionlessTable(name, log_td, data[key + ".log_f"], data[key + ".slope"], plateau)


def write_shipped_tables(path: Path = SHIPPED_TABLES_PATH) -> dict[str, DimensionlessTable]:
    """Compute the shipped tables by Laplace inversion and write them to ``path`` (.npz)."""
    tables = {_table_key("radial", red): _compute_influx_table("radial", red) for red in SHIPPED_RADIAL_REDS}
    tables[PD_RADIAL_KEY] = _compute_pd_table_radial_infinite()
    arrays = {"recipe": np.array(_tables_recipe())}
    for key, table in tables.items():
        arrays[key + ".log_td"] = table.log_td
        arrays[key + ".log_f"] = table.log_f
        arrays[key + ".slope"] = table.slope
    with open(path, "wb") as out:
        np.savez(out, **arrays)
    return tables


@lru_cache(maxsize=32)
def influx_table(geometry: str = "radial", red: float | None = None) -> DimensionlessTable:
    """The tabulated W_D(t_D) of one aquifer geometry (read from the shipped tables, or
    built once per process for a geometry they do not hold).

    Parameters
    ----------
    geometry : {"radial", "linear"}
    red : float or None
        Radial: outer radius over reservoir radius r_eD > 1; linear: any value marks
        the bounded (no-flow at distance L) case. None means infinite.
    """
    if geometry not in GEOMETRIES:
        raise ValueError(f"unknown aquifer geometry {geometry!r}; choose one of {GEOMETRIES}")
    if geometry == "radial" and red is not None and not red > 1.0:
        raise InputRangeError(f"r_eD must exceed 1 (got {red})")
    if geometry == "linear" and red is None:
        raise ValueError("the infinite linear aquifer has the closed form W_D = 2√(t_D/π); no table")
    red_f = None if red is None else float(red)
    shipped = _shipped_table(
        _table_key(geometry, red_f), _influx_label(geometry, red_f), wd_max(geometry, red_f)
    )
    return shipped if shipped is not None else _compute_influx_table(geometry, red_f)


def _influx_label(geometry: str, red_f: float | None) -> str:
    return f"W_D {geometry}" + ("" if red_f is None else f" (r_eD = {red_f:g})")


def _compute_influx_table(geometry: str, red_f: float | None) -> DimensionlessTable:
    """W_D(t_D) of one geometry by Laplace inversion (arguments checked by :func:`influx_table`)."""
    plateau = wd_max(geometry, red_f)
    if red_f is None:
        td_max = TD_TABLE_MAX_INFINITE
    elif geometry == "radial":
        # Beyond ~30 pseudo-steady-state time constants the deficit is below 1e-13.
        td_max = max(100.0, 30.0 * red_f**2 * max(np.log(red_f), 0.5))
    else:
        td_max = 40.0
    return _build_table(
        _influx_label(geometry, red_f),
        lambda s: wd_laplace(s, geometry, red_f),
        lambda s: wd_rate_laplace(s, geometry, red_f),
        td_max,
        plateau,
    )


def wd_linear_infinite(td):
    """W_D = 2√(t_D/π) of an infinite linear aquifer (exact)."""
    return 2.0 * np.sqrt(np.asarray(td, float) / np.pi)


@lru_cache(maxsize=1)
def pd_table_radial_infinite() -> DimensionlessTable:
    """Tabulated P_D(t_D) at r_D = 1 of an infinite radial aquifer (for Carter-Tracy; shipped)."""
    shipped = _shipped_table(PD_RADIAL_KEY, "P_D radial", None)
    return shipped if shipped is not None else _compute_pd_table_radial_infinite()


def _compute_pd_table_radial_infinite() -> DimensionlessTable:
    return _build_table(
        "P_D radial",
        pd_laplace_radial_infinite,
        lambda s: s * pd_laplace_radial_infinite(s),
        TD_TABLE_MAX_INFINITE,
        None,
    )


if __name__ == "__main__":  # python -m server.engine.aquifer.dimensionless: rebuild the shipped tables
    print(f"wrote {len(write_shipped_tables())} tables to {SHIPPED_TABLES_PATH}")
