"""What a history match reports: parameters, their covariance (s² (JᵀJ)⁻¹ at the optimum,
carried to the reported parameters by the delta method), the identifiability notes and the
:class:`..modelfit.ModelFit` (:mod:`.history_match` states the rules)."""

from __future__ import annotations

import math

import numpy as np

from ..modelfit import WEIGHTED_RSS_NOTE, ModelFit, parameter_words
from ..stats import t_quantile
from .match_problem import MatchProblem
from .models import AquiferModelSpec

#: Condition number of the column-scaled Jacobian above which the data cannot separate the parameters.
MAX_CONDITION = 1e6
#: |correlation| above which two parameters are called not separately identifiable (issue 4).
MAX_ABS_CORRELATION = 0.98
#: Fitted influx below this fraction of the gas pore volume (or below two standard errors)
#: is reported as no significant support.
NEGLIGIBLE_INFLUX_FRAC = 0.005


def reported_parameters(spec: AquiferModelSpec, problem: MatchProblem, theta):
    """Reported parameter names, values and d(reported)/dθ (one row each)."""
    eye = np.eye(theta.size)
    g_scf, pi, strength, rate = problem.unpack(theta)
    i = problem.i_strength
    names, values, rows = ["giip_bscf"], [g_scf / 1e9], [eye[0] * g_scf / 1e9]
    if problem.fit_pi:
        names.append("initial_pressure_psia")
        values.append(pi)
        rows.append(eye[1] * problem.grid.initial_pressure_psia)
    ds = eye[i] * (strength if spec.has_rate else problem.s_ref)  # d strength / dθ
    if spec.has_rate:  # in valley coordinates the strength is exp(θ_i) s_ref / W_D(rate t_end)
        ds = ds - eye[i + 1] * strength * problem.valley_log_wd(rate)[1]
    if spec.name == "aquifer_fetkovich":  # Fetkovich's own pair: Wei = c_t W_i p_i, J = λ c_t W_i
        d_pi = eye[1] * problem.grid.initial_pressure_psia if problem.fit_pi else 0.0
        names += ["wei_rb", "j_rb_per_day_psi"]
        values += [strength * pi, strength * rate]
        rows += [ds * pi + strength * d_pi, ds * rate + eye[i + 1] * strength * rate]
    else:
        names.append(spec.strength_name)
        values.append(strength)
        rows.append(ds)
        if spec.has_rate:
            names.append(spec.rate_name)
            values.append(rate)
            rows.append(eye[i + 1] * rate)
    return names, np.array(values), np.array(rows)


def _covariance(jac, s2, transform):
    """Covariance of the reported parameters, and the condition number of the scaled Jacobian.

    θ-components with no effect on the fit are left out of the inversion; reported
    parameters that depend on them get infinite variance and no correlation.
    """
    norms = np.linalg.norm(jac, axis=0)
    live = norms > 1e-12 * max(norms.max(), 1e-300)
    j_live = jac[:, live]
    sv = np.linalg.svd(j_live / norms[live], compute_uv=False)
    cond = float(sv[0] / sv[-1]) if sv.size and sv[-1] > 0 else np.inf
    cov_theta = np.zeros((jac.shape[1],) * 2)
    cov_theta[np.ix_(live, live)] = s2 * np.linalg.pinv(j_live.T @ j_live)
    cov = transform @ cov_theta @ transform.T
    dead = np.any(transform[:, ~live] != 0, axis=1)
    cov[dead, :] = np.nan
    cov[:, dead] = np.nan
    cov[dead, dead] = np.inf
    se = np.sqrt(np.diag(cov))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(se, se)
    corr[~np.isfinite(corr)] = np.nan
    np.fill_diagonal(corr, 1.0)
    return se, corr, cond, bool(np.any(~live))


def _giip_step_in_se(jac, resid_w, active_mask, se_ln_g: float) -> float:
    """|Gauss-Newton step of ln G| from θ over the standard error of ln G [1]: how far further
    iterations would move GIIP, to first order, in its own standard errors (parameters held at
    a bound left out; the minimum-norm step where the data do not separate the others)."""
    free = np.asarray(active_mask) == 0
    if not free[0] or not se_ln_g > 0:
        return float("inf")
    step, *_ = np.linalg.lstsq(jac[:, free], -resid_w, rcond=None)
    return abs(float(step[0])) / se_ln_g


def _identifiability_notes(spec, problem, result, names, corr, cond, has_dead, influx_frac):
    """(identifiable, notes) by the rules of the module docstring."""
    notes = []
    mask = result.active_mask
    i = problem.i_strength
    strength_zero = mask[i] == -1 or influx_frac < 1e-6
    if strength_zero:
        notes.append("aquifer strength fitted at zero: the surveys show no aquifer support")
    elif has_dead:
        notes.append("a parameter has no effect on the fitted p/z")
    if cond > MAX_CONDITION:
        notes.append(
            f"the surveys do not determine all parameters (scaled Jacobian condition number {cond:.3g})"
        )
    for a in range(len(names)):
        for b in range(a + 1, len(names)):
            if abs(corr[a, b]) > MAX_ABS_CORRELATION:  # NaN compares False
                notes.append(
                    f"{parameter_words(names[a])} and {parameter_words(names[b])} are correlated "
                    f"at {corr[a, b]:+.3f}: the data cannot separate them"
                )
    if mask[0] != 0:
        notes.append("GIIP ended on a bound of its search range")
    if problem.fit_pi and mask[1] != 0:
        notes.append("the initial pressure ended on a bound of its search range (-20 %, +25 % of the given)")
    if mask[i] == 1:
        notes.append("aquifer strength ended on its upper bound")
    if spec.has_rate and mask[i + 1] != 0 and not strength_zero:
        notes.append(
            "the aquifer time constant ended on a bound: the aquifer responds "
            + (
                "faster than the data resolve (as a pot aquifer)"
                if mask[i + 1] == 1
                else "too slowly for the data to resolve"
            )
        )
    return not notes, notes


def model_fit_of(inputs, spec, problem: MatchProblem, result, red, reds) -> ModelFit:
    theta = result.x
    state, fitted = problem.state(theta)
    jac = problem.jacobian(theta)
    resid_w = problem.residuals(theta)
    n, k = fitted.size, theta.size
    rss = float(resid_w @ resid_w)
    dof = max(n - k, 1)
    names, values, transform = reported_parameters(spec, problem, theta)
    g_scf, pi, _, _ = problem.unpack(theta)
    influx_frac = float(state.we_rb[-1] / problem.solver.gas_pore_volume_rb(g_scf, pi))
    # The derived influx fraction rides along as a last row (its standard error by the delta method).
    se_all, corr_all, cond, has_dead = _covariance(
        jac, rss / dof, np.vstack([transform, problem.influx_frac_gradient])
    )
    se, corr = se_all[:-1], corr_all[:-1, :-1]
    influx_se = float(se_all[-1])
    identifiable, notes = _identifiability_notes(
        spec, problem, result, names, corr, cond, has_dead, influx_frac
    )
    converged = bool(result.success or problem.stopped_settled) and state.converged
    step_se = math.inf
    if state.converged and not converged and result.status == 0 and se_all[0] > 0:  # the cap
        step_se = _giip_step_in_se(jac, resid_w, result.active_mask, float(se_all[0]) / float(values[0]))
    if not state.converged:
        notes.append("the tank balance did not converge at the fitted parameters")
    elif not converged and step_se < GIIP_SETTLED_SE:
        converged = True  # GIIP, the number reported, has settled; the valley's parameters have not
        notes.append(
            f"the fit stopped at its cap of {result.nfev} balance solves along a valley of parameters "
            f"the data do not separate, with GIIP settled: a further step would move it by "
            f"{step_se:.2f} of its standard error"
        )
    elif not converged:  # in practice: wandering along a flat valley of the misfit
        notes.append(f"the fit did not converge ({result.message})")
    identifiable = identifiable and converged
    if influx_frac < NEGLIGIBLE_INFLUX_FRAC or influx_frac < 2.0 * influx_se:
        notes.append(
            f"no significant aquifer support: the fitted influx is {influx_frac:.2%} ± {influx_se:.2%} "
            "of the gas pore volume by the end of the history"
        )
    notes.append(WEIGHTED_RSS_NOTE)
    params = dict(zip(names, (float(v) for v in values), strict=True))
    params["influx_frac_of_gas_pv"] = influx_frac  # derived: We / (G B_gi) at the end of the history
    if len(reds) > 1:
        if red is not None:
            params["red"] = float(red)
        options = ", ".join("∞" if r is None else f"{r:g}" for r in reds)
        if red is None:
            notes.append(f"infinite aquifer chosen from r_eD in {{{options}}}")
        else:
            notes.append(
                f"outer radius ratio r_eD = {red:g} chosen from {{{options}}} (counted as a parameter)"
            )
    g = float(values[0])
    se_ln_g = float(se[0]) / g
    tq = t_quantile(0.5 + inputs.choices.confidence_level / 2.0, dof)
    giip_low, giip_high = lognormal_interval(g, se_ln_g, tq)
    if giip_low is None:
        identifiable = False
        notes.insert(
            0,
            f"GIIP not determined: its interval is unbounded (standard error of ln G {se_ln_g:.3g}; "
            f"an upper end beyond {MAX_INTERVAL_FACTOR:.0e} times the estimate is reported as unbounded)",
        )
    return ModelFit(
        name=spec.name,
        title=spec.title,
        # The infinite radial aquifer is the vEH model's base form, with the same four
        # parameters as Fetkovich's; a finite outer radius is one more, chosen by the data.
        n_params=k + (1 if red is not None else 0),
        n_obs=n,
        rss_psia2=rss,
        residual_pz_psia=problem.grid.obs_pz_psia - fitted,
        fitted_pz_psia=fitted,
        giip_bscf=g,
        giip_low_bscf=giip_low,
        giip_high_bscf=giip_high,
        params=params,
        param_se={
            **dict(zip(names, (float(v) for v in se), strict=True)),
            "influx_frac_of_gas_pv": influx_se,
        },
        correlation=corr,
        identifiable=identifiable,
        converged=converged,
        notes=tuple(notes),
    )


#: A fit stopped by the solve cap whose first-order step would move ln G by less than this many
#: of its standard errors has a settled GIIP (engine 0.6.8): measured on 66 capped fits of
#: bench_accuracy seeds 1-30, those under 0.5 moved by at most 0.12 standard errors when
#: allowed 200 solves (benchmarks/README.md, engine 0.6.8 section).
GIIP_SETTLED_SE = 0.5

#: A GIIP interval reaching beyond this factor of its estimate says nothing: reported unbounded.
MAX_INTERVAL_FACTOR = 1e6


def lognormal_interval(g_bscf: float, se_ln_g: float, t_quantile: float):
    """(low, high) = G exp(∓ t se(ln G)), or (None, None) when the interval is unbounded
    (a standard error that is infinite, NaN, or so large that the upper end exceeds
    ``MAX_INTERVAL_FACTOR`` times G, where exp would also overflow)."""
    half = t_quantile * se_ln_g
    if not np.isfinite(half) or half > np.log(MAX_INTERVAL_FACTOR):
        return None, None
    return float(g_bscf * np.exp(-half)), float(g_bscf * np.exp(half))
