"""Every model's own GIIP, EUR, recovery factor and remaining at the abandonment pressure.

EUR is the cumulative gas when the producing tank reaches the abandonment pressure:
- straight p/z line: G (1 - (p/z)_a / (p/z)_i) (Havlena & Odeh 1963; domain reference §2.2);
- rock and water expansion: G (1 - (p/z)_a [1 - c_e (p_i - p_a)] / (p/z)_i) (Ramagost &
  Farshad 1981, domain reference §2.6);
- aquifer and tank-network models: the fitted model stepped past the history at the recent
  rate (:mod:`..aquifer.extend`, :mod:`..compartments.extend`).
"""

from __future__ import annotations

import math

from ..aquifer.extend import aquifer_recovery
from ..compartments.extend import two_tank_recovery
from ..compartments.multitank_fit import carries_tanks
from ..diagnosis.compare import ModelComparison
from ..errors import EngineError
from ..inputs import FieldInputs
from ..modelfit import ModelFit, determined
from ..prepare.points import PreparedData
from .types import ModelOutcome

TITLES = {
    "single_tank": "Straight p/z line (volumetric tank)",
    "tank_ce": "Rock and water expansion (ce fitted)",
    "aquifer_pot": "Tank with a pot aquifer",
    "aquifer_fetkovich": "Tank with a Fetkovich aquifer",
    "aquifer_veh_radial": "Tank with a radial van Everdingen-Hurst aquifer",
    "two_tank": "Two connected tanks",
    "multi_tank": "Connected tanks",
    "connected_tank": "Connected tank (wells on a separate trend set apart)",
    "volumetric": "Volumetric estimate (too little depletion for material balance)",
}


def closed_form_eur_bscf(fit: ModelFit, prepared: PreparedData) -> float | None:
    """EUR of a straight-line or constant-ce tank at the abandonment pressure [Bscf]."""
    g = fit.giip_bscf
    pzi = fit.params.get("initial_pz_psia", prepared.initial_pz_psia)
    if g is None or not pzi > 0:
        return None
    pz_a = prepared.abandonment_pz_psia
    ce = fit.params.get("ce_per_psi", 0.0)
    if ce:
        p_i = prepared.initial_pz_psia * prepared.initial_z
        p_a = prepared.abandonment_pz_psia * prepared.abandonment_z
        pz_a *= 1.0 - ce * (p_i - p_a)
    return max(g * (1.0 - pz_a / pzi), 0.0)


def outcome(
    fit: ModelFit,
    inputs: FieldInputs,
    prepared: PreparedData,
    rate_bscf_per_day: float,
    comparison: ModelComparison | None,
) -> ModelOutcome:
    """One model's outcome; stepped models use ``rate_bscf_per_day`` beyond the history."""
    ok, status = determined(fit)
    eur, method = None, "not computed: no GIIP"
    tanks = carries_tanks(fit.params)
    read = fit.name == "connected_tank" and tanks  # the connected tank read from a network
    if fit.giip_bscf is not None:
        if fit.name in ("single_tank", "tank_ce", "connected_tank") and not tanks:
            eur, method = closed_form_eur_bscf(fit, prepared), "closed form at the abandonment pressure"
        else:
            try:
                stepper = two_tank_recovery if tanks else aquifer_recovery
                stepped = stepper(inputs, prepared, fit, rate_bscf_per_day)
            except (EngineError, ValueError, KeyError, FloatingPointError) as exc:
                stepped, method = None, f"not computed: {exc}"
            if stepped is not None:
                eur, method = stepped.eur_bscf, stepped.method
            elif method.startswith("not computed: no"):
                method = "not computed: the model could not be stepped past the history"
    alone = closed_form_eur_bscf(fit, prepared) if read and eur is not None else None
    if alone is not None:
        method += (
            f"; includes about {max(eur - alone, 0.0):.1f} Bscf the other compartment feeds the producers "
            f"(their tank alone would give {alone:.1f} Bscf)"
        )
    gp = prepared.cumulative_gas_bscf
    row = comparison.row(fit.name) if comparison else None
    g = fit.giip_bscf
    return ModelOutcome(
        model=fit.name,
        title=TITLES.get(fit.name, fit.title),
        giip_bscf=g,
        giip_low_bscf=fit.giip_low_bscf,
        giip_high_bscf=fit.giip_high_bscf,
        eur_bscf=eur,
        recovery_factor_frac=eur / g if eur is not None and g else None,
        remaining_bscf=max(eur - gp, 0.0) if eur is not None else None,
        determined=ok,
        status=status,
        eur_method=method,
        delta_aicc=None if row is None or not math.isfinite(row.delta_aicc) else row.delta_aicc,
        akaike_weight=None if row is None else row.akaike_weight,
        hub_giip_bscf=None if read else fit.params.get("giip_tank1_bscf"),
        network_read=read,
    )
