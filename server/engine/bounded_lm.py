"""Levenberg-Marquardt with box bounds for small problems (a few parameters, tens of residuals).

Used by the aquifer history match (:mod:`.aquifer.history_match`), whose residuals and
Jacobian cost a few tens of microseconds compiled: there a general-purpose solver's own
bookkeeping (``scipy.optimize.least_squares``, trust-region reflective) cost as much as the
model (issue 17). The method:

* steps solve (JᵀJ + μ D²) δ = −Jᵀr over the free parameters, D the column norms of J
  (the largest seen so far, as scipy's ``x_scale="jac"``), so the damping is invariant to
  the parameters' units (Moré 1978);
* a parameter on a bound whose gradient pushes it outward is held there; the trial point is
  the projection of x + δ onto the box (projected Levenberg-Marquardt: Kanzow, Yamashita &
  Fukushima 2004, J. Comput. Appl. Math. 172, 375-397);
* the step is accepted when the actual reduction of ½‖r‖² is positive against the reduction
  the linear model predicts for the projected step, and μ is updated by Nielsen's rule
  (μ × max(1/3, 1 − (2ρ − 1)³) on success, ×ν with ν doubling on failure; Madsen, Nielsen
  & Tingleff 2004, *Methods for non-linear least squares problems*, §3.2).

Stopping: ``ftol``, ``xtol`` and ``gtol`` as scipy documents them, the evaluation cap
``max_nfev``, or a ``callback(x, r)`` that raises StopIteration after an iteration. The
result has scipy's fields the callers read (x, fun, active_mask, success, status, message,
nfev, njev).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

_MESSAGES = {
    0: "The maximum number of function evaluations is exceeded.",
    1: "`gtol` termination condition is satisfied.",
    2: "`ftol` termination condition is satisfied.",
    3: "`xtol` termination condition is satisfied.",
    -1: "The Jacobian is not finite.",
    -2: "`callback` raised `StopIteration`.",
    -3: "The residuals are not finite at the starting point.",
}


@dataclass
class BoundedFit:
    x: np.ndarray
    fun: np.ndarray
    active_mask: np.ndarray  # -1 on the lower bound, 1 on the upper, 0 free (as scipy's)
    status: int
    nfev: int
    njev: int

    @property
    def success(self) -> bool:
        return self.status > 0

    @property
    def message(self) -> str:
        return _MESSAGES[self.status]


def active_constraints(x, lo, hi, rtol):
    """-1 / 1 where x is within rtol max(1, |bound|) of its lower / upper bound, else 0
    (the rule of scipy.optimize._lsq.common.find_active_constraints)."""
    active = np.zeros(x.size, dtype=int)
    low_dist, up_dist = x - lo, hi - x
    active[low_dist <= np.minimum(up_dist, rtol * np.maximum(1.0, np.abs(lo)))] = -1
    active[up_dist <= np.minimum(low_dist, rtol * np.maximum(1.0, np.abs(hi)))] = 1
    return active


def bounded_least_squares(
    fun, jac, x0, bounds, *, ftol=1e-8, xtol=1e-8, gtol=1e-8, max_nfev=100, callback=None
) -> BoundedFit:
    """Minimise ½‖fun(x)‖² for lo <= x <= hi from x0 (clipped into the box)."""
    lo, hi = (np.asarray(b, float) for b in bounds)
    x = np.clip(np.asarray(x0, float), lo, hi)
    r = np.asarray(fun(x), float)
    nfev, njev = 1, 0
    if not np.all(np.isfinite(r)):
        return BoundedFit(x, r, active_constraints(x, lo, hi, xtol), -3, nfev, njev)
    cost = 0.5 * float(r @ r)
    j = np.asarray(jac(x), float)
    njev += 1
    scale = np.zeros(x.size)
    mu, nu = None, 2.0
    status = None
    while status is None:
        if not np.all(np.isfinite(j)):
            status = -1
            break
        norms = np.sqrt(np.einsum("ij,ij->j", j, j))
        scale = np.maximum(scale, np.where(norms > 0, norms, 1.0))
        g = j.T @ r
        free = ~(((x <= lo) & (g > 0)) | ((x >= hi) & (g < 0)))
        if np.max(np.abs(g[free] / scale[free]), initial=0.0) < gtol:
            status = 1
            break
        jf = j[:, free]
        a = jf.T @ jf
        d2 = scale[free] ** 2
        if mu is None:  # Nielsen's start: 1e-3 of the largest scaled curvature
            mu = 1e-3 * float(np.max(np.diag(a) / d2))
        accepted = False
        while not accepted:
            delta = np.zeros(x.size)
            try:
                delta[free] = np.linalg.solve(a + mu * np.diag(d2), -g[free])
            except np.linalg.LinAlgError:
                mu, nu = mu * nu, 2.0 * nu
                if not mu < 1e100:  # no damping makes the system solvable (a non-finite Jacobian)
                    status = 0
                    break
                continue
            x_new = np.clip(x + delta, lo, hi)
            step = x_new - x
            js = j @ step
            predicted = -(float(g @ step) + 0.5 * float(js @ js))
            r_new = np.asarray(fun(x_new), float)
            nfev += 1
            cost_new = 0.5 * float(r_new @ r_new) if np.all(np.isfinite(r_new)) else np.inf
            actual = cost - cost_new
            if predicted > 0 and actual > 0:
                rho = actual / predicted
                mu *= max(1.0 / 3.0, 1.0 - (2.0 * rho - 1.0) ** 3)
                nu = 2.0
                accepted = True
                x, r, cost_old, cost = x_new, r_new, cost, cost_new
                if actual < ftol * cost_old and rho > 0.25:
                    status = 2
                elif np.linalg.norm(step) < xtol * (xtol + np.linalg.norm(x)):
                    status = 3
                elif nfev >= max_nfev:
                    status = 0
                else:
                    j = np.asarray(jac(x), float)
                    njev += 1
                    if callback is not None:
                        try:
                            callback(x, r)
                        except StopIteration:
                            status = -2
            else:
                mu, nu = mu * nu, 2.0 * nu
                if np.linalg.norm(step) < xtol * (xtol + np.linalg.norm(x)):
                    status = 3  # the damping has shrunk the step to nothing
                elif nfev >= max_nfev:
                    status = 0
            if status is not None:
                break
    return BoundedFit(x, r, active_constraints(x, lo, hi, xtol), status, nfev, njev)
