"""Diagnose one field: run every available model fit, compare them, raise the flags."""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from .errors import InsufficientDataError
from .modelfit import ModelFit
from .prepare import PreparedData
from .pz import fit_pz_line


def single_tank_fit(prepared: PreparedData, confidence_level: float = 0.95) -> ModelFit:
    """The volumetric p/z line as a ModelFit (weighted least squares, delta-method interval).

    Stands in until :mod:`.pz` provides its own ``single_tank`` ModelFit.
    """
    _, gp, pz, w = prepared.arrays()
    line = fit_pz_line(gp, pz, w)
    a, b = line.intercept_psia, line.slope_psia_per_bscf
    fitted = a + b * gp
    r = pz - fitted
    n = gp.size
    rss = float(np.sum(w * r**2))
    if n < 3:
        raise InsufficientDataError("a single-tank fit with an interval needs at least 3 surveys")
    x = np.column_stack([np.ones(n), gp]) * np.sqrt(w)[:, None]
    cov = rss / (n - 2) * np.linalg.inv(x.T @ x)
    g = -a / b
    grad = np.array([-1.0 / b, a / b**2])
    se_g = math.sqrt(max(grad @ cov @ grad, 0.0))
    t = stats.t.ppf(0.5 + 0.5 * confidence_level, n - 2)
    se = np.sqrt(np.diag(cov))
    return ModelFit(
        name="single_tank",
        title="Single volumetric tank (p/z line)",
        n_params=2,
        n_obs=n,
        rss_psia2=rss,
        residual_pz_psia=r,
        fitted_pz_psia=fitted,
        giip_bscf=g,
        giip_low_bscf=g - t * se_g,
        giip_high_bscf=g + t * se_g,
        params={"initial_pz_psia": a, "slope_psia_per_bscf": b},
        param_se={"initial_pz_psia": float(se[0]), "slope_psia_per_bscf": float(se[1])},
        correlation=cov / np.outer(se, se),
    )
