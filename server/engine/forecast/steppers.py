"""Reservoir steppers: the basis model's average pressure after each month's withdrawal.

Every stepper holds the state at the end of the history (or of the last committed month)
and answers :meth:`Stepper.trial` (the pressure if ``gas_scf`` were withdrawn over
``dt_days``) without changing it; :meth:`Stepper.commit` then keeps the last trial. The
profile (:mod:`.profile`) tries several withdrawals per month to find the rate the wells
deliver. Gas is the model's own (wet-gas equivalent when condensate is corrected) [scf].

Here the closed forms of the volumetric tank and of rock and water expansion:

* straight p/z line (Havlena & Odeh 1963; domain reference §2.2):
  p/z = a (1 − G_p/G);
* rock and water expansion (Ramagost & Farshad 1981; domain reference §2.6):
  (p/z)[1 − c_e (p_i − p)] = a (1 − G_p/G), solved for p on the field's z table.

Aquifer models and tank networks step in time: :mod:`.aquifer_stepper`, :mod:`.network_stepper`.
"""

from __future__ import annotations

from bisect import bisect_right

import numpy as np

from ..aquifer.tank_solver import PzTable
from ..aquifer.tank_solver import field_pz_table as field_pz_table  # the steppers' p/z table
from ..errors import InsufficientDataError


class Stepper:
    """The state of a model's producing tank; subclasses define :meth:`_pressure_after`."""

    #: Net water influx as a share of the gas pore volume (aquifer models only).
    invaded_frac: float = 0.0

    def __init__(self, p_psia: float, gp_scf: float):
        self.p_psia = float(p_psia)
        self.gp_scf = float(gp_scf)
        self._last = None

    def trial(self, gas_scf: float, dt_days: float) -> float:
        """Average pressure [psia] after withdrawing ``gas_scf`` over ``dt_days``; state unchanged."""
        last = self._last
        if last is not None and last[0] == gas_scf and last[1] == dt_days:  # asked again: the same answer
            return last[2]
        self._last = (gas_scf, dt_days, self._pressure_after(gas_scf, dt_days))
        return self._last[2]

    def commit(self, gas_scf: float, dt_days: float) -> None:
        """Advance the state by one month's withdrawal."""
        if self._last is None or self._last[:2] != (gas_scf, dt_days):
            self.trial(gas_scf, dt_days)
        self._advance(gas_scf, dt_days, self._last[2])
        self.gp_scf += gas_scf
        self.p_psia = self._last[2]
        self._last = None

    def _pressure_after(self, gas_scf: float, dt_days: float) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    def _advance(self, gas_scf: float, dt_days: float, p_psia: float) -> None:
        """Keep whatever else the model carries (influx, other tanks)."""


class LineStepper(Stepper):
    """A volumetric tank, with rock and water expansion when ``ce_per_psi`` > 0.

    Parameters
    ----------
    table : PzTable
        The field's p/z(p).
    intercept_pz_psia : float
        a, the (corrected) p/z line at G_p = 0 [psia].
    giip_scf : float
        G [scf].
    gp_scf : float
        Cumulative gas at the end of the history [scf].
    ce_per_psi : float
        Effective compressibility c_e [1/psi]; 0 for the straight line.
    initial_pressure_psia : float
        p_i of the c_e correction [psia].
    """

    def __init__(
        self,
        table: PzTable,
        intercept_pz_psia: float,
        giip_scf: float,
        gp_scf: float,
        ce_per_psi: float = 0.0,
        initial_pressure_psia: float = 0.0,
    ):
        if not (giip_scf > 0 and intercept_pz_psia > 0):
            raise InsufficientDataError("the line has no positive GIIP and intercept to step")
        self.a, self.g = float(intercept_pz_psia), float(giip_scf)
        self.p_grid = table.p
        phi = table.phi * (1.0 - ce_per_psi * (initial_pressure_psia - table.p)) if ce_per_psi else table.phi
        if np.any(np.diff(phi) <= 0):
            raise InsufficientDataError("the corrected p/z does not rise with pressure over the table")
        self.phi = phi
        self._phi_list, self._p_list = (phi.tolist(), table.p.tolist()) if ce_per_psi else table.lists()
        super().__init__(self._p_at(gp_scf), gp_scf)

    def _p_at(self, gp_scf: float) -> float:
        """p where the (corrected) p/z meets the line, linear between table nodes (scalar, fast)."""
        target = self.a * (1.0 - gp_scf / self.g)
        phi, p = self._phi_list, self._p_list
        i = bisect_right(phi, target)
        if i <= 0:
            return p[0]
        if i >= len(phi):
            return p[-1]
        return p[i - 1] + (target - phi[i - 1]) * (p[i] - p[i - 1]) / (phi[i] - phi[i - 1])

    def _pressure_after(self, gas_scf: float, dt_days: float) -> float:
        return self._p_at(self.gp_scf + gas_scf)
