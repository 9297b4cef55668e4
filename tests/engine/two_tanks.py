"""A field of two connected tanks made by the forward simulator (server/synthetic/tank.py), with
the two-tank model's parameters set to the simulator's truth, so that tests of stepping the model
past the history (the headline's outcomes, the forecast's network stepper) test only the stepping."""

from __future__ import annotations

from dataclasses import dataclass

from server.engine.compartments.multitank_fit import fit_two_tank
from server.engine.inputs import FieldInputs
from server.engine.modelfit import ModelFit
from server.engine.prepare.points import PreparedData, prepare
from server.synthetic.tank import SecondTank, TankSpec
from tests.engine.aquifer_cases import FLUID, PI_PSIA, T_DEGF
from tests.engine.cases import synthetic_field

RATE_MSCF_D = 12000.0
GIIP_TANK1_BSCF = 60.0
GIIP_TANK2_BSCF = 40.0
CONNECTION = 0.05  # scf/(cp d psi²)


@dataclass(frozen=True)
class TwoTankCase:
    spec: TankSpec
    inputs: FieldInputs
    prepared: PreparedData
    fit: ModelFit  # the two-tank fit to the noisy surveys
    true_params: dict  # its parameters with the tank sizes and the connection set to the truth


def two_tank_case() -> TwoTankCase:
    """Tanks of 60 and 40 Bscf connected at 0.05 scf/(cp d psi²), 12 years at 12,000 Mscf/d
    from one well in the first tank, surveys with 0.5 psi noise (seed 3)."""
    spec = TankSpec(
        GIIP_TANK1_BSCF,
        PI_PSIA,
        T_DEGF,
        FLUID,
        second_tank=SecondTank(GIIP_TANK2_BSCF, connection_scf_cp_per_day_psi2=CONNECTION),
    )
    inputs = synthetic_field(
        spec,
        years=12,
        rate_mscf_d=RATE_MSCF_D,
        wells=[("A", None, 0.0, 1, 120.0, 0.0)],
        noise_psi=0.5,
        seed=3,
    )
    prepared = prepare(inputs)
    fit = fit_two_tank(inputs, prepared)
    true = {**fit.params, "giip_tank1_bscf": GIIP_TANK1_BSCF, "giip_tank2_bscf": GIIP_TANK2_BSCF}
    true[next(k for k in true if k.startswith("transmissibility"))] = CONNECTION
    return TwoTankCase(spec, inputs, prepared, fit, true)
