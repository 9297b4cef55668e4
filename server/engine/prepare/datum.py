"""Survey corrections: gauge depth to datum through the gas column; field averages.

A static gauge reads the reservoir pressure at its own depth. Material balance
needs every pressure at one datum, so each reading is moved along the static gas
column that connects gauge and datum,

    dp/dD = rho_g(p) g/g_c = p M / (z(p) R T) / 144     [psi/ft, D true vertical depth down]

with z varying with pressure along the column. The column is taken isothermal at
reservoir temperature: over the few hundred feet between gauge and datum the
geothermal change (about 1.5 degF per 100 ft) alters the density by well under 1 %
of a correction that is itself a percent or two of the pressure (common practice).

References
----------
Static gas-column gradient: e.g. Lee, W.J. and Wattenbarger, R.A. (1996). Gas
    Reservoir Engineering, SPE Textbook Series 5, ch. 3 (from memory); the ODE is
    hydrostatics with the real-gas density.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from ..pvt.gas import AIR_MOLAR_MASS_LB_PER_LBMOL
from ..units import GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR, degR_from_degF

#: Largest RK4 step along the column [ft]. The gas column's scale height is tens of
#: thousands of feet, so the step's local error is below 1e-10 psi.
MAX_STEP_FT = 250.0


def gas_gradient_psi_per_ft(p_psia, z, t_degF, gas_gravity):
    """Static gas gradient rho_g/144 = p M / (z R T 144) [psi/ft]."""
    m = AIR_MOLAR_MASS_LB_PER_LBMOL * gas_gravity
    return (
        np.asarray(p_psia, float)
        * m
        / (np.asarray(z, float) * GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR * degR_from_degF(t_degF) * 144.0)
    )


def datum_pressure_psia(p_gauge_psia, gauge_depth_ft, datum_depth_ft, t_degF, gas_gravity, z_of_p):
    """Pressure at the datum from a pressure measured at a gauge, through the gas column.

    Integrates dp/dD = p M / (z(p) R T 144) from each gauge depth to the datum by
    the classical fourth-order Runge-Kutta method, all surveys at once (steps of at
    most 250 ft). A gauge above the datum (smaller depth) gives a higher datum
    pressure; one below gives a lower.

    Parameters
    ----------
    p_gauge_psia : float or array
        Absolute pressure at the gauge [psia], > 0; NaN gives NaN.
    gauge_depth_ft : float or array
        True vertical depth of the gauge [ft], same reference as the datum.
    datum_depth_ft : float
        True vertical depth of the datum [ft].
    t_degF : float
        Reservoir temperature [degF]; the column is isothermal.
    gas_gravity : float
        Gravity of the gas in the column [-] (the well-stream gravity for a wet gas).
    z_of_p : callable
        z as a function of pressure at ``t_degF`` (the same z source as the analysis).

    Returns
    -------
    p_datum_psia : ndarray (float for scalar inputs)

    Raises
    ------
    InputRangeError
        A pressure not above zero, or a depth that is not a finite number.
    """
    p0 = np.asarray(p_gauge_psia, float)
    d_gauge = np.asarray(gauge_depth_ft, float)
    scalar = p0.ndim == 0 and d_gauge.ndim == 0
    p0, d_gauge = np.broadcast_arrays(np.atleast_1d(p0), np.atleast_1d(d_gauge))
    if not np.all(np.isfinite(d_gauge)) or not math.isfinite(datum_depth_ft):
        raise InputRangeError("gauge and datum depths must be numbers [ft]")
    if np.any(p0 <= 0):
        raise InputRangeError("gauge pressures must be absolute and positive [psia]")
    p = p0.astype(float).copy()
    dh = datum_depth_ft - d_gauge
    n = max(1, math.ceil(float(np.max(np.abs(dh), initial=0.0)) / MAX_STEP_FT))
    h = dh / n

    def grad(pp):
        return gas_gradient_psi_per_ft(pp, z_of_p(pp), t_degF, gas_gravity)

    for _ in range(n):
        k1 = grad(p)
        k2 = grad(p + 0.5 * h * k1)
        k3 = grad(p + 0.5 * h * k2)
        k4 = grad(p + h * k3)
        p = p + h * (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0
    return float(p[0]) if scalar else p


@dataclass(frozen=True)
class FieldPressure:
    """One averaged pressure of a survey campaign (one compartment label)."""

    t_days: float  # weight-averaged survey time
    p_psia: float  # weight-averaged datum pressure
    weight: float  # sum of the members' weights
    n_surveys: int
    wells: tuple[str, ...]
    compartment: str | None
    spread_psi: float  # highest minus lowest member pressure
    members: tuple[int, ...]  # positions in the arrays passed in


def average_field_pressure(
    t_days, p_datum_psia, weight, well, compartment=None, *, window_days: float = 31.0
) -> tuple[FieldPressure, ...]:
    """Average several wells' datum pressures into one pressure per survey campaign.

    The rule (common practice; stated so that every average can be re-derived):

    1. Only wells with the same compartment label are averaged together (wells with
       no label form one group): an average across a sealing or leaky fault is not
       the pressure of any tank.
    2. Within a group, surveys are taken in time order; a campaign starts at the
       earliest survey not yet used and takes every survey up to ``window_days``
       later (default 31 days: production moves the pressure by much less than
       survey noise in a month for any field with years of life).
    3. The campaign pressure and time are the weighted means of its surveys, with
       the weights given (relative 1/variance from survey quality; a drainage-volume
       weight may be passed instead where volumes are known, which makes it the
       volumetric average that material balance strictly needs).
    4. The spread (highest minus lowest) is kept so that a campaign whose wells
       disagree beyond noise can be flagged; the per-well points stay untouched.

    Parameters
    ----------
    t_days : array
        Survey times [days].
    p_datum_psia : array
        Datum-corrected pressures [psia].
    weight : array
        Relative weights, > 0.
    well : sequence of str
        Well of each survey.
    compartment : sequence of (str or None), optional
        Compartment label of each survey's well.
    window_days : float
        Campaign length [days], > 0.

    Returns
    -------
    tuple of FieldPressure, ordered by group then time.
    """
    t = np.asarray(t_days, float)
    p = np.asarray(p_datum_psia, float)
    w = np.asarray(weight, float)
    n = t.size
    if not (p.size == n and w.size == n and len(well) == n):
        raise InputRangeError("times, pressures, weights and wells must have the same length")
    if not window_days > 0:
        raise InputRangeError("the averaging window must be positive [days]")
    if n and (not np.all(np.isfinite(t)) or not np.all(np.isfinite(p)) or np.any(~(w > 0))):
        raise InputRangeError("survey times and pressures must be numbers and weights positive")
    comp = list(compartment) if compartment is not None else [None] * n
    out = []
    for label in sorted({c for c in comp}, key=lambda c: (c is not None, c or "")):
        idx = np.array([i for i in range(n) if comp[i] == label], dtype=int)
        idx = idx[np.argsort(t[idx], kind="stable")]
        k = 0
        while k < idx.size:
            stop = k
            while stop < idx.size and t[idx[stop]] <= t[idx[k]] + window_days:
                stop += 1
            members = idx[k:stop]
            wm = w[members]
            out.append(
                FieldPressure(
                    t_days=float(np.sum(wm * t[members]) / wm.sum()),
                    p_psia=float(np.sum(wm * p[members]) / wm.sum()),
                    weight=float(wm.sum()),
                    n_surveys=int(members.size),
                    wells=tuple(sorted({well[i] for i in members})),
                    compartment=label,
                    spread_psi=float(np.ptp(p[members])),
                    members=tuple(int(i) for i in members),
                )
            )
            k = stop
    return tuple(out)
