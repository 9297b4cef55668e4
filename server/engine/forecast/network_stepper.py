"""A fitted tank network (two tanks or a star) stepped month by month.

The history is replayed with the fit's own steps and withdrawals (:mod:`..compartments.
multitank_fit`), then each forecast month is one more step of :func:`..compartments.
multitank.simulate_star_tanks` from the tanks' state, with the month's gas taken from the
tanks in the last period's shares (the wells produce from the hub, tank 0). The pressure
the wells see is the hub's; gas in a poorly connected neighbour comes only as fast as its
connection lets it (Payne 1996; Hagoort & Hoogstra 1997; domain reference §4.2).
"""

from __future__ import annotations

import numpy as np

from ..compartments.multitank import simulate_star_tanks
from ..compartments.multitank_fit import _layout, _problem
from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from .steppers import Stepper, field_pz_table


class NetworkStepper(Stepper):
    """Star network of volumetric tanks from a fit's parameters; ``giip_scale`` scales every tank."""

    def __init__(self, inputs: FieldInputs, prepared: PreparedData, params: dict, giip_scale: float = 1.0):
        layout = _layout(inputs, prepared)
        n = len(layout.labels)
        prob = _problem(inputs, prepared, layout, 50, "pseudo_pressure", None)
        self.g = [params[f"giip_tank{i + 1}_bscf"] * 1e9 * giip_scale for i in range(n)]
        self.gam = [v for k, v in params.items() if k.startswith("transmissibility_tank")]
        self.pzi = params["initial_pz_psia"]
        share = np.asarray(layout.share[-1], float)
        self.share = share / share.sum() if share.sum() > 0 else np.eye(n)[0]
        self.pot = prob.potential
        self.table = field_pz_table(inputs, prepared)
        u = simulate_star_tanks(self.g, self.gam, self.pzi, self.pot, prob.step_days, prob.withdrawal_scf)
        self.u = list(u[-1])
        self._next = None
        super().__init__(self._hub_pressure(self.u), float(np.sum(prob.withdrawal_scf)))

    def _hub_pressure(self, u) -> float:
        return float(self.table.p_of_pz(self.pzi * u[0]))

    def _pressure_after(self, gas_scf: float, dt_days: float) -> float:
        w = (gas_scf * self.share).tolist()
        self._next = list(
            simulate_star_tanks(self.g, self.gam, self.pzi, self.pot, [dt_days], [w], self.u)[-1]
        )
        return self._hub_pressure(self._next)

    def _advance(self, gas_scf: float, dt_days: float, p_psia: float) -> None:
        self._pressure_after(gas_scf, dt_days)
        self.u = self._next
