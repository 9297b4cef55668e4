"""The aquifer models of the history match: how influx depends on pressure, and their kernels.

Each model writes the cumulative influx on a uniform step grid as We = s · T(c) Δ(p_i, p):
s a strength [rb/psi], T(c) the lower-triangular Toeplitz matrix of a unit kernel column c
that depends on at most one time constant, and Δ the pressure drops of the model's step
convention (:mod:`.influx`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import accel
from .dimensionless import influx_table
from .influx import (
    fetkovich_kernel_column,
    step_average_pressure_drops,
    step_pressure_drops,
    veh_kernel_column,
)
from .tank_solver import InfluxModel


def _pot_drops(pi, p):
    return pi - p


@dataclass(frozen=True)
class AquiferModelSpec:
    name: str  # ModelFit key
    title: str
    influx: InfluxModel
    strength_name: str  # reported name of s
    rate_name: str | None  # reported name of the time constant, None without one

    @property
    def has_rate(self) -> bool:
        return self.rate_name is not None

    def unit_columns(self, dt_days: float, n: int, rates, red: float | None = None) -> np.ndarray:
        """Unit kernel columns, one row per time constant in ``rates`` (ignored for pot)."""
        if not self.has_rate:
            c = np.zeros((1, n))
            c[0, 0] = 1.0
            return c
        r = np.asarray(rates, float).reshape(-1, 1)
        if self.name == "aquifer_fetkovich":
            return fetkovich_kernel_column(dt_days, n, 1.0, r)
        return veh_kernel_column(dt_days, n, r, "radial", red)


SPECS = {
    s.name: s
    for s in (
        AquiferModelSpec(
            "aquifer_pot",
            "Tank with a pot aquifer",
            InfluxModel(_pot_drops, ((0, -1.0),)),
            "ct_wi_rb_per_psi",
            None,
        ),
        AquiferModelSpec(
            "aquifer_fetkovich",
            "Tank with a Fetkovich pseudo-steady-state aquifer",
            InfluxModel(step_average_pressure_drops, ((0, -0.5), (1, -0.5))),
            "ct_wi_rb_per_psi",
            "decay_per_day",
        ),
        AquiferModelSpec(
            "aquifer_veh_radial",
            "Tank with a van Everdingen-Hurst radial aquifer",
            InfluxModel(step_pressure_drops, ((0, -0.5), (2, 0.5))),
            "u_rb_per_psi",
            "td_per_day",
        ),
    )
}


class KernelCache:
    """Unit kernel columns of one model on one grid, cached by time constant."""

    def __init__(self, spec: AquiferModelSpec, dt_days: float, n: int, red: float | None):
        self.spec, self.dt, self.n, self.red = spec, dt_days, n, red
        self._cache: dict[float, np.ndarray] = {}

    def unit(self, rate: float | None) -> np.ndarray:
        key = -1.0 if rate is None else float(rate)
        c = self._cache.get(key)
        if c is None:
            if len(self._cache) > 8:
                self._cache.clear()
            c = None
            if accel.enabled() and self.spec.name == "aquifer_veh_radial":
                c = self._compiled_veh(rate)
            if c is None:
                c = self.spec.unit_columns(self.dt, self.n, [rate if rate is not None else 0.0], self.red)[0]
            self._cache[key] = c
        return c

    def _compiled_veh(self, rate: float):
        """The van Everdingen-Hurst column W_D(t_D k Δt) compiled (:func:`.compiled.table_column`);
        None (the numpy path, which raises) past an unbounded table or for a non-positive t_D."""
        from .compiled import table_column

        step = float(rate) * self.dt
        if not step > 0.0:
            return None
        tab = influx_table("radial", self.red)
        c = table_column(tab.log_td, tab.log_f, tab.slope, tab.plateau is not None, step, self.n)
        return None if np.isnan(c).any() else c
