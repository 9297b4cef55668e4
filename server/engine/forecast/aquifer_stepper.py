"""A fitted tank-with-aquifer model stepped month by month, influx marching in time.

The history is solved once on a uniform grid of average months (365.25/12 days) ending at
the last production month, with the history match's own solver (:class:`..aquifer.tank_solver.
TankSolver`, the same kernel and step convention). Each forecast month adds one step: the
influx at its end is the superposition over all earlier pressure drops plus the current
step's drop, which is linear in the new pressure, so the balance

    u(p) [1 − c_e (p_i − p) − (W_e(p) − W_p)/(G B_gi)] = 1 − G_p/G

is one scalar equation per month (Newton's method). Marching reproduces the whole-history
Newton solve of the same grid (tests/engine/forecast/test_aquifer_forecast.py). The influx clock
advances one average month per calendar month (a calendar month differs from it by at
most 2.4 days, and the two clocks never drift more than about 1.5 days apart).

Produced water follows the gas at the recent water-gas ratio. References: Havlena & Odeh
(1963); van Everdingen & Hurst (1949); Fetkovich (1971); domain reference §3.
"""

from __future__ import annotations

import dataclasses
import math
from bisect import bisect_right

import numpy as np

from ..aquifer.extend import model_parameters
from ..aquifer.models import SPECS, KernelCache
from ..aquifer.tank_solver import TankSolver, tank_grid
from ..errors import InsufficientDataError
from ..inputs import FieldInputs
from ..prepare.cumulative import cumulative_at_times
from ..prepare.points import PreparedData
from ..tank.balance_terms import DEFAULT_BW_RB_PER_STB, produced_water_is_liquid
from .steppers import Stepper

MONTH_DAYS = 365.25 / 12.0
_NEWTON_TOL_PSI = 1e-7


class AquiferStepper(Stepper):
    """Tank + aquifer (pot, Fetkovich, radial van Everdingen-Hurst) from its fitted parameters.

    Parameters
    ----------
    inputs, prepared : the field's inputs and prepared points.
    model : str
        Key of :data:`..aquifer.models.SPECS`.
    params : dict
        The fit's parameters (``ModelFit.params``).
    giip_scale : float
        Multiplies the fitted G (low/high cases); every other parameter is kept.
    max_months : int
        Most forecast months the kernel is built for.
    """

    def __init__(
        self,
        inputs: FieldInputs,
        prepared: PreparedData,
        model: str,
        params: dict,
        giip_scale: float = 1.0,
        max_months: int = 600,
    ):
        spec = SPECS[model]
        grid0 = tank_grid(inputs, prepared)
        g, pi, strength, rate, red = model_parameters(model, params, grid0.initial_pressure_psia)
        g *= giip_scale
        ends = np.asarray(prepared.production_end_t_days, float)
        t_last = float(ends[-1])
        t0 = float(grid0.t_start_days)
        n_hist = max(int(math.ceil((t_last - t0) / MONTH_DAYS - 1e-9)), 1)
        start = t_last - n_hist * MONTH_DAYS
        t = MONTH_DAYS * np.arange(1, n_hist + 1)
        wet = np.diff(np.concatenate([[0.0], prepared.cumulative_gas_at_end_bscf])) * 1e9
        wp = np.zeros(n_hist)
        water = inputs.production_water_stb
        if water is not None and produced_water_is_liquid(inputs):
            wp = cumulative_at_times(start + t, ends, water) * DEFAULT_BW_RB_PER_STB
        grid = dataclasses.replace(
            grid0, t_start_days=start, t_days=t, gp_scf=cumulative_at_times(start + t, ends, wet), wp_rb=wp
        )
        self.kernel = strength * KernelCache(spec, MONTH_DAYS, n_hist + max_months, red).unit(rate)
        self.solver = TankSolver(grid, spec.influx)
        state = self.solver.solve(g, pi, self.kernel[:n_hist])
        if not state.converged:
            raise InsufficientDataError("the aquifer model's history could not be solved on monthly steps")
        self.spec, self.g, self.pi, self.table = spec, float(g), float(pi), grid.table
        self.ce = float(grid.ce_per_psi)
        # The table as lists for scalar lookups in the monthly solve (np.interp's formula).
        tab = grid.table
        self._tp, self._tphi, self._tdphi = tab.p.tolist(), tab.phi.tolist(), tab.dphi.tolist()
        self.pz_i = float(grid.table.pz(pi))
        self.gpv = float(self.solver.gas_pore_volume_rb(g, pi))
        self.coef0 = float(next(c for off, c in spec.influx.bands if off == 0))
        self.p_hist = list(state.p_psia)
        # The pressure drops of every step so far, in a buffer the kernel's length (no list to convert).
        self._drops = np.zeros(self.kernel.size)
        self._drops[:n_hist] = spec.influx.drops(pi, state.p_psia)
        self.k0 = float(self.kernel[0])
        self.wp_rb = float(wp[-1])
        self.invaded_frac = float((state.we_rb[-1] - self.wp_rb) / self.gpv)
        # Water follows gas at the recent ratio [rb per scf of model gas].
        gp = grid.gp_scf
        k = max(n_hist - 13, 0)
        self.wgr_rb_per_scf = (wp[-1] - wp[k]) / (gp[-1] - gp[k]) if gp[-1] > gp[k] else 0.0
        self._known = None
        super().__init__(float(state.p_psia[-1]), float(gp[-1]))

    def _known_influx(self) -> tuple[float, float]:
        """(influx of all earlier drops, the new drop at p = 0) for the next step."""
        n = len(self.p_hist)
        if self._known is None or self._known[0] != n:
            if n >= self.kernel.size:
                raise InsufficientDataError("the forecast ran past the aquifer kernel's length")
            past = float(np.dot(self.kernel[n:0:-1], self._drops[:n])) if n else 0.0
            tail = ([self.pi, self.pi] + self.p_hist[-2:])[-2:]
            d0 = float(self.spec.influx.drops(self.pi, np.array([*tail, 0.0]))[-1])
            self._known = (n, past, d0)
        return self._known[1], self._known[2]

    def _pz_dpz(self, p: float) -> tuple[float, float]:
        """(p/z [psia], d(p/z)/dp [-]) at p [psia] by np.interp's formula on the table, for one scalar."""
        xp, phi, dphi = self._tp, self._tphi, self._tdphi
        j = bisect_right(xp, p) - 1
        if j < 0:
            return phi[0], dphi[0]
        if j >= len(xp) - 1:
            return phi[-1], dphi[-1]
        h, t = xp[j + 1] - xp[j], p - xp[j]
        return (phi[j + 1] - phi[j]) / h * t + phi[j], (dphi[j + 1] - dphi[j]) / h * t + dphi[j]

    def _solve(self, gas_scf: float) -> tuple[float, float]:
        """(p [psia], W_e [rb]) at the end of the next step."""
        past, d0 = self._known_influx()
        k0, coef0, gpv, ce, pi = self.k0, self.coef0, self.gpv, self.ce, self.pi
        pz_i = self.pz_i
        p_lo, p_hi = self._tp[0], self._tp[-1]
        wp = self.wp_rb + self.wgr_rb_per_scf * gas_scf
        rhs = 1.0 - (self.gp_scf + gas_scf) / self.g
        # Newton from the last trial of the step, else from the last step's drop carried on.
        last, hist = self._last, self.p_hist
        if last is not None:
            p = last[2]
        else:
            p = min(max(2.0 * hist[-1] - hist[-2], p_lo), p_hi) if len(hist) > 1 else self.p_psia
        for _ in range(40):
            we = past + k0 * (d0 + coef0 * p)
            pz, dpz = self._pz_dpz(p)
            u = pz / pz_i
            d = 1.0 - ce * (pi - p) - (we - wp) / gpv
            f = u * d - rhs
            df = dpz / pz_i * d + u * (ce - k0 * coef0 / gpv)
            step = -f / df if df > 0 else -f
            p_new = min(max(p + step, p_lo), p_hi)
            if abs(p_new - p) < _NEWTON_TOL_PSI:
                p = p_new
                break
            p = p_new
        return p, past + k0 * (d0 + coef0 * p)

    def _pressure_after(self, gas_scf: float, dt_days: float) -> float:
        return self._solve(gas_scf)[0]

    def influx_after(self, gas_scf: float) -> float:
        """Net influx as a share of the gas pore volume after the next step [-]."""
        p, we = self._solve(gas_scf)
        return (we - self.wp_rb - self.wgr_rb_per_scf * gas_scf) / self.gpv

    def _advance(self, gas_scf: float, dt_days: float, p_psia: float) -> None:
        past, d0 = self._known_influx()
        p, we = p_psia, past + self.k0 * (d0 + self.coef0 * p_psia)  # p_psia is _solve(gas_scf)'s
        self.wp_rb += self.wgr_rb_per_scf * gas_scf
        self.invaded_frac = (we - self.wp_rb) / self.gpv
        self._drops[len(self.p_hist)] = d0 + self.coef0 * p
        self.p_hist.append(p)
        self._known = None
