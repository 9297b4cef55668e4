"""The common shape of every fitted reservoir model, so models can be compared.

Every model (single tank, tank with compressibility, tank with an aquifer, two tanks)
is fitted to the same observable, p/z at the included surveys [psia], and reports its
residuals there; information criteria and F-tests are then comparable across models.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

#: Words for the fitted parameters' keys, for notes and pages (keys stay stable for programs).
PARAMETER_WORDS = {
    "giip_bscf": "GIIP",
    "initial_pz_psia": "initial p/z",
    "initial_pressure_psia": "initial pressure",
    "ce_per_psi": "effective compressibility",
    "ct_wi_rb_per_psi": "aquifer strength (ct Wi)",
    "wei_rb": "encroachable water (Wei)",
    "j_rb_per_day_psi": "aquifer productivity index (J)",
    "decay_per_day": "aquifer time constant",
    "u_rb_per_psi": "aquifer constant (U)",
    "td_per_day": "aquifer dimensionless time per day",
    "red": "aquifer outer radius ratio",
    "influx_frac_of_gas_pv": "water influx as a share of the gas pore volume",
}
WEIGHTED_RSS_NOTE = "Residuals are weighted by survey quality (good = 1) before they are summed."


def parameter_words(key: str) -> str:
    """A fitted parameter's key in words (tank-network keys by their tank number)."""
    if key in PARAMETER_WORDS:
        return PARAMETER_WORDS[key]
    if key.startswith("giip_tank"):
        n = key.removeprefix("giip_tank").split("_")[0]
        return "GIIP of the producing tank" if n == "1" else f"GIIP of tank {n}"
    if key.startswith("transmissibility_tank"):
        n = key.removeprefix("transmissibility_tank").split("_")[0]
        return f"connection of tank {n} to the producing tank"
    return key.replace("_", " ")


@dataclass(frozen=True)
class ModelFit:
    name: str  # stable key, e.g. "single_tank", "tank_ce", "aquifer_fetkovich", "two_tank"
    title: str  # for people, e.g. "Single tank with rock and water expansion"
    n_params: int
    n_obs: int
    rss_psia2: float
    residual_pz_psia: np.ndarray
    fitted_pz_psia: np.ndarray
    giip_bscf: float | None
    giip_low_bscf: float | None = None
    giip_high_bscf: float | None = None
    params: dict[str, float] = field(default_factory=dict)
    param_se: dict[str, float] = field(default_factory=dict)
    correlation: np.ndarray | None = None
    identifiable: bool = True
    converged: bool = True
    notes: tuple[str, ...] = ()


#: Notes of a fit that say a parameter is not determined (the fitters' own words).
_UNDETERMINED = ("bound", "fitted at zero", "not determined", "did not converge", "does not fall")


def determined(fit) -> tuple[bool, str]:
    """Whether the data determine a fit's GIIP (bounded, converged, no parameter at a search
    bound): for a :class:`ModelFit` or its assessment in a model comparison (same fields)."""
    if fit.giip_bscf is None:
        return False, "not determined: the data do not bound its GIIP"
    if not fit.converged:
        return False, "not determined: the fit did not converge"
    if fit.giip_low_bscf is None or fit.giip_high_bscf is None:
        return False, "not determined: its GIIP interval is unbounded"
    bad = [n for n in fit.notes if any(word in n for word in _UNDETERMINED)]
    if bad:
        return False, "not determined: " + bad[0]
    return True, "determined"


#: Longest look ahead when a model is stepped to the abandonment pressure [years] (common practice).
HORIZON_YEARS = 50.0


@dataclass(frozen=True)
class SteppedRecovery:
    """A model stepped past its history at a constant rate to the abandonment pressure."""

    eur_bscf: float
    reached_abandonment: bool
    years_ahead: float  # from the end of the history to abandonment (or the horizon)
    method: str  # for people
