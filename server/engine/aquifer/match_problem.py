"""The history match's least-squares problem: θ → weighted p/z residuals at the surveys, their
Jacobian, and the stopping rule (:mod:`.history_match` describes the parameters θ).

The Jacobian is exact to first order: dp/dθ = −(∂R/∂p)⁻¹ ∂R/∂θ (implicit function theorem,
one triangular solve), with the partial derivatives at fixed pressures taken by forward
differences.
"""

from __future__ import annotations

import numpy as np

from .dimensionless import influx_table
from .models import AquiferModelSpec, KernelCache
from .tank_solver import TankGrid, TankSolver

#: The fit stops once every parameter is within this many standard errors of the
#: linearised optimum (:meth:`MatchProblem.settled`).
SETTLED_SE = 0.1
#: Models fitted in valley coordinates (:meth:`MatchProblem.valley_log_wd`).
VALLEY_MODELS = ("aquifer_veh_radial",)


class MatchProblem:
    """θ → weighted p/z residuals at the surveys, and their Jacobian."""

    def __init__(
        self, grid: TankGrid, spec: AquiferModelSpec, red, fit_pi: bool, s_ref: float, along_valley=False
    ):
        self.grid, self.spec, self.fit_pi, self.s_ref = grid, spec, fit_pi, s_ref
        # Valley coordinates (vEH only): θ_strength = ln(U W_D(t_D,end) / s_ref), see valley_log_wd.
        self.along_valley = along_valley and spec.name in VALLEY_MODELS
        self._wd_table = influx_table("radial", red) if self.along_valley else None
        self._log_wd: dict[float, tuple[float, float]] = {}  # rate -> valley_log_wd(rate)
        self.kernels = KernelCache(spec, float(grid.t_days[0]), grid.n_steps, red)
        self.solver = TankSolver(grid, spec.influx)
        self.sqrt_w = np.sqrt(grid.obs_weight)
        self.i_strength = 2 if fit_pi else 1
        self._last = None  # (key, state, fitted p/z)
        self._last_jac = None  # (key, weighted Jacobian)
        self._tangent = None  # (θ, pressures, dp/dθ) at the last Jacobian: Newton's start
        self.influx_frac_gradient = None  # d(We_end / (G B_gi))/dθ, set by jacobian()
        self.stopped_settled = False  # set when the stopping rule of settled() ended the fit

    def unpack(self, theta):
        """(G [scf], p_i [psia], strength [rb/psi], time constant [1/day] or None)."""
        pi = self.grid.initial_pressure_psia * (float(theta[1]) if self.fit_pi else 1.0)
        i = self.i_strength
        if self.spec.has_rate:  # log scales: strength and time constant trade off along a valley
            rate = float(np.exp(theta[i + 1]))
            log_w = self.valley_log_wd(rate)[0]
            return float(np.exp(theta[0])) * 1e9, pi, float(np.exp(theta[i] - log_w)) * self.s_ref, rate
        return float(np.exp(theta[0])) * 1e9, pi, float(theta[i]) * self.s_ref, None

    def valley_log_wd(self, rate):
        """(ln W_D(t_D at the end of the history), its slope d ln W_D / d ln t_D) in valley
        coordinates, (0, 0) in plain ones.

        The van Everdingen-Hurst influx is U Σ Δp_j W_D(t_D (t − t_j)). Where the data see
        only early times (W_D ≈ 2 √(t_D/π)) the surveys fix U √t_D, not U and t_D apart; where
        they see only the plateau of a bounded aquifer (W_D ≈ (r_eD² − 1)/2), U W_D and not
        t_D. Both are U W_D(t_D,end): as the strength coordinate it turns the valley of the
        misfit (u and t_D correlated at −1.000 on the benchmark's aquifer field) into a
        line along the time-constant axis, which the trust region follows in a few steps
        instead of walking it (van Everdingen & Hurst 1949 for W_D's limits; the same
        model and optimum, only the coordinates change).
        """
        if self._wd_table is None:
            return 0.0, 0.0
        cached = self._log_wd.get(rate)
        if cached is None:
            if len(self._log_wd) > 64:
                self._log_wd.clear()
            log_td = float(np.log(rate * float(self.grid.t_days[-1])))
            cached = self._log_wd[rate] = self._wd_table.log_value_and_slope_at(log_td)
        return cached

    def from_plain(self, theta, bounds):
        """θ and bounds in plain coordinates (ln(s/s_ref), ln rate) to this problem's.

        The strength's bounds become the envelope of the plain box: from the lower bound at
        the smallest time constant to the upper bound at the largest.
        """
        theta, lo, hi = (np.array(v, float) for v in (theta, *bounds))
        if self.along_valley:
            i = self.i_strength
            theta[i] += self.valley_log_wd(float(np.exp(theta[i + 1])))[0]
            lo[i] += self.valley_log_wd(float(np.exp(lo[i + 1])))[0]
            hi[i] += self.valley_log_wd(float(np.exp(hi[i + 1])))[0]
        return theta, (lo, hi)

    def kernel(self, theta):
        g, pi, strength, rate = self.unpack(theta)
        return g, pi, strength * self.kernels.unit(rate)

    def state(self, theta):
        key = np.asarray(theta, float).tobytes()
        if self._last is not None and self._last[0] == key:
            return self._last[1], self._last[2]
        g, pi, k = self.kernel(theta)
        st = self.solver.solve(g, pi, k, self._predicted_p(theta))
        if not st.converged and self._last is not None:  # from the volumetric history instead
            st = self.solver.solve(g, pi, k, None)
        y = self.solver.observe(st.we_rb, g, pi, st.p_psia)
        self._last = (key, st, y)
        return st, y

    def _predicted_p(self, theta):
        """Newton's start: the pressures at the last Jacobian moved by dp/dθ (θ − θ_J), else the
        last solve's pressures, else None (the volumetric history). Only the start changes: the
        solve converges to the same history (to 1e-7 psi) in fewer steps."""
        if self._tangent is not None:
            theta_j, p_j, dp_dtheta = self._tangent
            return p_j + dp_dtheta @ (np.asarray(theta, float) - theta_j)
        return None if self._last is None else self._last[1].p_psia

    def residuals(self, theta):
        _, y = self.state(theta)
        return self.sqrt_w * (y - self.grid.obs_pz_psia)

    def jacobian(self, theta):
        key = np.asarray(theta, float).tobytes()
        if self._last_jac is not None and self._last_jac[0] == key:
            self.influx_frac_gradient = self._last_jac[2].copy()
            return self._last_jac[1]
        st, y = self.state(theta)
        theta = np.asarray(theta, float)
        solver = self.solver
        g0, pi0, _ = self.kernel(theta)
        steps = 1e-7 * np.maximum(np.abs(theta), 1.0)
        perturbed = []
        for j in range(theta.size):
            th = theta.copy()
            th[j] += steps[j]
            # Influx at fixed pressures changes only with p_i, the strength and the time constant.
            perturbed.append((*self.kernel(th), j != 0))
        dps, wes = solver.linear_responses(st, g0, pi0, perturbed)
        jac = np.empty((y.size, theta.size))
        frac0 = st.we_rb[-1] / solver.gas_pore_volume_rb(g0, pi0)
        self.influx_frac_gradient = np.empty(theta.size)
        for j, (g, pi, _, _) in enumerate(perturbed):
            jac[:, j] = (solver.observe(wes[j], g, pi, st.p_psia + dps[j]) - y) / steps[j]
            frac = wes[j][-1] / solver.gas_pore_volume_rb(g, pi)
            self.influx_frac_gradient[j] = (frac - frac0) / steps[j]
        dp_dtheta = (dps / steps[:, None]).T
        self._last_jac = (key, self.sqrt_w[:, None] * jac, self.influx_frac_gradient.copy())
        self._tangent = (theta.copy(), st.p_psia, dp_dtheta)
        return self._last_jac[1]

    def settled(self, theta, resid_w, bounds) -> bool:
        """True when the linearised optimum is within :data:`SETTLED_SE` standard errors.

        The Gauss-Newton step from θ (parameters held at a bound they press against
        left out) would lower the weighted RSS by ‖Q₁ᵀr‖², Q₁ an orthonormal basis of
        the Jacobian's columns. That reduction, over s² = RSS/(n − k), is the squared
        distance from θ to the linearised optimum in the metric of the parameters'
        joint confidence region, so each parameter (and GIIP) is within √(ratio)
        standard errors of where further iterations would take it to first order.
        The same comparison of the remaining reduction with the residual variance is
        the relative-offset criterion of Bates & Watts (1981, Technometrics 23, 179-183).
        """
        theta = np.asarray(theta, float)
        jac = self.jacobian(theta)
        lo, hi = bounds
        grad = jac.T @ resid_w
        span = hi - lo
        pressed = ((theta <= lo + 1e-9 * span) & (grad > 0)) | ((theta >= hi - 1e-9 * span) & (grad < 0))
        free = jac[:, ~pressed]
        n, k = resid_w.size, theta.size
        rss = float(resid_w @ resid_w)
        if free.shape[1] == 0 or n <= k or rss <= 0:
            self.stopped_settled = True
            return True
        q, _ = np.linalg.qr(free)
        reduction = float(np.sum((q.T @ resid_w) ** 2))
        self.stopped_settled = reduction < SETTLED_SE**2 * rss / (n - k)
        return self.stopped_settled
