"""History match of GIIP and aquifer parameters on the surveys' p/z.

For each aquifer model (pot, Fetkovich, van Everdingen-Hurst radial; :mod:`.models`)
the tank balance is solved for the pressure at every step of a uniform grid (about
monthly, :mod:`.tank_solver`), with the influx depending on the whole pressure history,
and the parameters are fitted by nonlinear least squares (bounded Levenberg-Marquardt,
:mod:`..bounded_lm`; scipy's ``least_squares`` before issue 17's fourth round, now the tests'
reference) to p/z at the included surveys, weighted by the survey weights. Starting values come
from the Havlena-Odeh straight line on the observed pressures, scanned over the aquifer
time constant (and r_eD) (:func:`.havlena_odeh.havlena_odeh_scan`).

Parameters θ = [ln G, p_i/p_i,given (unless anchored), s/s_ref, ln time constant], all of
order one, with s the aquifer strength [rb/psi] and s_ref the gas pore volume per psi of
initial pressure; models with a time constant use ln(s/s_ref), because strength and time
constant trade off along a valley that is nearly straight on log scales; the van
Everdingen-Hurst fit takes ln(s W_D(t_D,end)/s_ref) instead, which lays that valley along
the time-constant axis (:meth:`.match_problem.MatchProblem.valley_log_wd`). The Jacobian is exact
to first order: dp/dθ = −(∂R/∂p)⁻¹ ∂R/∂θ (implicit function theorem, one triangular solve),
with the partial derivatives at fixed pressures taken by forward differences.

Uncertainty: covariance s² (JᵀJ)⁻¹ at the optimum, s² = RSS/(n − k), carried to the
reported parameters by the delta method; GIIP's interval is taken on ln G (so it stays
positive). A fit is called not identifiable when the column-scaled Jacobian is
near-singular (condition number above :data:`MAX_CONDITION`), two reported parameters
correlate beyond :data:`MAX_ABS_CORRELATION`, a parameter ends on a bound, or the
aquifer strength is fitted at zero; the notes say which.

The parts: :mod:`.match_start` (starting values and bounds), :mod:`.match_problem` (residuals,
Jacobian, stopping rule), :mod:`.match_report` (covariance, notes, the ModelFit); this module runs
the fit and holds the public calls (and re-exports the parts' names it held before the split).

References
----------
Havlena & Odeh (1963); van Everdingen & Hurst (1949); Fetkovich (1971); domain
reference §3.5 (simultaneous solution; regression parameters strongly correlated).
"""

from __future__ import annotations

import numpy as np

from ..bounded_lm import bounded_least_squares
from ..errors import InsufficientDataError
from ..inputs import FieldInputs
from ..modelfit import ModelFit
from ..prepare.points import PreparedData
from .havlena_odeh import havlena_odeh_line_on_surveys, havlena_odeh_scan
from .match_problem import SETTLED_SE, VALLEY_MODELS, MatchProblem
from .match_report import (
    MAX_ABS_CORRELATION,
    MAX_CONDITION,
    MAX_INTERVAL_FACTOR,
    NEGLIGIBLE_INFLUX_FRAC,
    lognormal_interval,
    model_fit_of,
    reported_parameters,
)
from .match_start import (
    FORWARD_CHECKED_STARTS,
    NO_SUPPORT_START,
    RATE_END_BOUNDS,
    SCAN_END_GRID,
    VEH_RED_GRID,
    start_and_bounds,
)
from .models import SPECS, AquiferModelSpec
from .tank_solver import TankGrid, tank_grid

# Re-exported: the names this module held before it was split (tests and callers import them here).
__all__ = [
    "DEFAULT_MODELS",
    "FORWARD_CHECKED_STARTS",
    "MAX_ABS_CORRELATION",
    "MAX_CONDITION",
    "MAX_EVALUATIONS",
    "MAX_INTERVAL_FACTOR",
    "NEGLIGIBLE_INFLUX_FRAC",
    "NO_SUPPORT_START",
    "RATE_END_BOUNDS",
    "SCAN_END_GRID",
    "SETTLED_SE",
    "SETTLED_STOP",
    "SPECS",
    "VALLEY_MODELS",
    "VEH_RED_GRID",
    "MatchProblem",
    "field_havlena_odeh_line",
    "fit_aquifer_model",
    "fit_aquifer_models",
    "lognormal_interval",
    "tank_grid",
]
_Problem = MatchProblem
_start_and_bounds = start_and_bounds
_reported = reported_parameters

DEFAULT_MODELS = ("aquifer_pot", "aquifer_fetkovich", "aquifer_veh_radial")
#: Models the stopping rule ends: all three (engine 0.6.5; issue 17). On 70 fields (demo
#: variants, the benchmarks' fields) it saves 11 % of the balance solves, moves no GIIP by
#: more than 0.14 of its standard error and leaves every field's AICc order as it was.
SETTLED_STOP = ("aquifer_pot", "aquifer_fetkovich", "aquifer_veh_radial")
#: Safety cap on balance solves per fit (a fit wandering along a flat valley). 20 since issue
#: 17's third round (30 before): the fits that reach it walk a valley of undetermined
#: parameters (56 of 330 on 120 demo variants, 42 % of all solves; the stopping rule ends the
#: others after a median of 7). With 20, on those 120 fields no basis, flag, headline or
#: first-two ranking changed and only models reported "not determined" moved (GIIP by at most
#: 8 %, 0.9 of its standard error); the accuracy benchmark's 600 fields met the same targets
#: (387 of 400, 191 of 200), four ranges' low end moved by under 1 %. 15 lost one range's
#: coverage. benchmarks/README.md, "Portfolio recompute", has the figures.
MAX_EVALUATIONS = 20


def _fit(inputs: FieldInputs, grid: TankGrid, spec: AquiferModelSpec, reds) -> ModelFit:
    x0, bounds, fit_pi, s_ref, red = start_and_bounds(inputs, grid, spec, reds)
    problem = MatchProblem(grid, spec, red, fit_pi, s_ref, along_valley=True)
    x0, bounds = problem.from_plain(x0, bounds)

    def stop(x, resid_w):  # after each accepted step
        if problem.settled(x, resid_w, bounds):
            raise StopIteration

    # Tolerances: a relative RSS change of 1e-5 moves AIC by n x 1e-5, far below what separates
    # models; the stopping rule (Problem.settled) usually ends the fit first.
    result = bounded_least_squares(
        problem.residuals,
        problem.jacobian,
        x0,
        bounds,
        ftol=1e-5,
        xtol=1e-6,
        gtol=1e-8,
        max_nfev=MAX_EVALUATIONS,
        callback=stop if spec.name in SETTLED_STOP else None,
    )
    return model_fit_of(inputs, spec, problem, result, red, reds)


def fit_aquifer_model(
    inputs: FieldInputs, prepared: PreparedData, model: str, grid: TankGrid | None = None
) -> ModelFit:
    """Fit one tank-with-aquifer model to p/z at the included surveys.

    Parameters
    ----------
    inputs, prepared
        The field's inputs and its prepared p/z points.
    model : {"aquifer_pot", "aquifer_fetkovich", "aquifer_veh_radial"}
    grid : TankGrid, optional
        Reuse a grid built by :func:`.tank_solver.tank_grid` for the same field.

    Raises
    ------
    InsufficientDataError
        Too few included surveys, or too little depletion, for the model.
    """
    try:
        spec = SPECS[model]
    except KeyError:
        raise ValueError(f"unknown aquifer model {model!r}; choose one of {sorted(SPECS)}") from None
    grid = tank_grid(inputs, prepared) if grid is None else grid
    reds = VEH_RED_GRID if model == "aquifer_veh_radial" else (None,)
    k = (1 if inputs.choices.anchor_initial else 2) + (2 if spec.has_rate else 1)
    if grid.obs_pz_psia.size < k + 2:
        raise InsufficientDataError(
            f"{grid.obs_pz_psia.size} included surveys: a {spec.title.lower()} needs at least {k + 2}"
        )
    if float(grid.obs_gp_scf.max(initial=0.0)) <= 0.0 or float(np.ptp(grid.obs_gp_scf)) <= 0.0:
        raise InsufficientDataError(
            f"the included surveys lie at one cumulative production: a {spec.title.lower()} "
            "needs surveys after different amounts of gas produced"
        )
    return _fit(inputs, grid, spec, reds)


def field_havlena_odeh_line(inputs: FieldInputs, prepared: PreparedData, model: str, rate=None, red=None):
    """Havlena-Odeh line F/E_t against S/E_t on a field's surveys, for a model and time constant.

    Without ``rate`` the best of the scan is used (as for the history match's starting
    values). Returns (line, rate [1/day] or None, r_eD or None).
    """
    try:
        spec = SPECS[model]
    except KeyError:
        raise ValueError(f"unknown aquifer model {model!r}; choose one of {sorted(SPECS)}") from None
    grid = tank_grid(inputs, prepared)
    if rate is None and spec.has_rate:
        reds = VEH_RED_GRID if model == "aquifer_veh_radial" else (None,)
        start = havlena_odeh_scan(grid, spec, SCAN_END_GRID[model] / float(grid.t_days[-1]), reds)
        rate, red = start.rate, start.red
    return havlena_odeh_line_on_surveys(grid, spec, rate, red), rate, red


def fit_aquifer_models(
    inputs: FieldInputs, prepared: PreparedData, models=DEFAULT_MODELS
) -> tuple[ModelFit, ...]:
    """Fit each aquifer model the data allow (models that cannot be fitted are left out).

    Returns one :class:`..modelfit.ModelFit` per model, on p/z at the included surveys.
    """
    try:
        grid = tank_grid(inputs, prepared)
    except InsufficientDataError:
        return ()
    out = []
    for model in models:
        try:
            out.append(fit_aquifer_model(inputs, prepared, model, grid))
        except InsufficientDataError:
            continue
    return tuple(out)
