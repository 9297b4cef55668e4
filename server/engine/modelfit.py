"""The common shape of every fitted reservoir model, so models can be compared.

Every model (single tank, tank with compressibility, tank with an aquifer, two tanks)
is fitted to the same observable, p/z at the included surveys [psia], and reports its
residuals there; information criteria and F-tests are then comparable across models.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


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
