"""The history match's inner loops, compiled (numba), used when :mod:`..accel` is enabled
(worker processes): the tank balance's Newton solve, the Jacobian's linear responses and the
van Everdingen-Hurst kernel column from its table.

The solve is the same method as :meth:`.tank_solver.TankSolver.solve` in numpy (the default and the
reference the tests compare with): Newton's method on the whole pressure history, each step
one forward substitution with the lower-triangular matrix diag(c/a) − T(m). On the 24-480
steps of a field's grid numpy's cost is its per-call overhead (about 25 calls a step);
compiled, a step costs its arithmetic (issue 17). The influx drops are written generically
from the model's bands: Δ_j = Σ coef (p_{j−offset} − p_i), with p_k = p_i for k < 0
(:class:`.tank_solver.InfluxModel`; the pot, Fetkovich and van Everdingen-Hurst conventions
of :mod:`.influx` are all of this form).

Compiled on first use and cached on disk beside this file (numba's ``cache=True``); ``make
setup`` and the Docker image compile it once (``python -m server.engine.warm``). Imported only
when the compiled path runs: importing numba costs about half a second. Each function has a
numpy counterpart that the tests compare it with (tests/engine/aquifer/test_compiled.py).
"""

from __future__ import annotations

import numpy as np
from numba import njit


@njit(cache=True, nogil=True)
def _support(column):
    """1 + the index of the column's last non-zero entry (0 for a zero column): a pot aquifer's
    kernel is one entry, a fast Fetkovich one underflows to zero; the sums skip the zeros."""
    k = column.size
    while k > 0 and column[k - 1] == 0.0:
        k -= 1
    return k


@njit(cache=True, nogil=True)
def influx_rb(kernel, offsets, coefs, pi, p):
    """We = T(kernel) Δ(p_i, p) [rb] (causal convolution of the kernel with the drops)."""
    n = p.size
    drops = np.zeros(n)
    for b in range(offsets.size):
        off, coef = offsets[b], coefs[b]
        for j in range(off, n):
            drops[j] += coef * (p[j - off] - pi)
    we = np.empty(n)
    width = _support(kernel)
    for i in range(n):
        acc = 0.0
        for j in range(max(0, i - width + 1), i + 1):
            acc += kernel[i - j] * drops[j]
        we[i] = acc
    return we


@njit(cache=True, nogil=True)
def _interp_pair(x, xp, fp, gp):
    """(f(x), g(x)) by linear interpolation on the uniform, increasing grid xp (clamped), as np.interp."""
    n = xp.size
    if x <= xp[0]:
        return fp[0], gp[0]
    if x >= xp[n - 1]:
        return fp[n - 1], gp[n - 1]
    h = (xp[n - 1] - xp[0]) / (n - 1)
    j = int((x - xp[0]) / h)
    if j > n - 2:
        j = n - 2
    while j > 0 and xp[j] > x:  # rounding of the index near a node
        j -= 1
    while j < n - 2 and xp[j + 1] <= x:
        j += 1
    t = x - xp[j]
    dx = xp[j + 1] - xp[j]
    return fp[j] + (fp[j + 1] - fp[j]) / dx * t, gp[j] + (gp[j + 1] - gp[j]) / dx * t


@njit(cache=True, nogil=True)
def newton_history(
    kernel, m, offsets, coefs, pi, tab_p, tab_phi, tab_dphi, ce_per_psi, wp_rb, gp_scf, g_scf, gpv_rb,
    pz_i, p, tol_psia, max_iter,
):  # fmt: skip
    """Solve R(p) = 0 for the pressure history p [psia] from the start ``p`` (modified in place).

    R_n = u_n [1 − c_e (p_i − p_n) − (We_n − W_pn)/(G B_gi)] − (1 − G_pn/G), u = (p/z)/(p_i/z_i);
    ∂R/∂p = diag(c) − diag(a) T(m), a = u/(G B_gi). Returns True when the last step moved no
    pressure by ``tol_psia`` or more; stops early (False) on a non-finite step.
    """
    n = p.size
    p_lo, p_hi = tab_p[0], tab_p[tab_p.size - 1]
    for i in range(n):
        p[i] = min(max(p[i], p_lo), p_hi)
    rhs = np.empty(n)
    diag = np.empty(n)
    step = np.empty(n)
    width = _support(m)
    # We is linear in p: after a step δ it is We + T(m) δ, which the substitution sums anyway
    # (recomputed from the drops only after a step clipped at the table's ends).
    we = influx_rb(kernel, offsets, coefs, pi, p)
    t_m_step = np.empty(n)
    for _ in range(max_iter):
        for i in range(n):
            phi, dphi = _interp_pair(p[i], tab_p, tab_phi, tab_dphi)
            u = phi / pz_i
            d = 1.0 - ce_per_psi * (pi - p[i]) - (we[i] - wp_rb[i]) / gpv_rb
            r = u * d - (1.0 - gp_scf[i] / g_scf)
            a = u / gpv_rb
            c = dphi / pz_i * d + u * ce_per_psi
            rhs[i] = -r / a
            diag[i] = c / a - m[0]
        for i in range(n):  # (diag(c/a) − T(m)) step = −R/a, forward substitution
            acc = 0.0
            for j in range(max(0, i - width + 1), i):
                acc += m[i - j] * step[j]
            step[i] = (rhs[i] + acc) / diag[i]
            if not np.isfinite(step[i]):
                return False
            t_m_step[i] = acc + m[0] * step[i]
        moved = 0.0
        clipped = False
        for i in range(n):
            new = p[i] + step[i]
            if new < p_lo or new > p_hi:
                new = min(max(new, p_lo), p_hi)
                clipped = True
            moved = max(moved, abs(new - p[i]))
            p[i] = new
        if moved < tol_psia:
            return True
        if clipped:
            we = influx_rb(kernel, offsets, coefs, pi, p)
        else:
            for i in range(n):
                we[i] += t_m_step[i]
    return False


@njit(cache=True, nogil=True)
def linear_responses(
    kernels, fresh, gs_scf, pis, pz_is, gpvs_rb, p, we0_rb, m, offsets, coefs, tab_p, tab_phi, tab_dphi,
    ce_per_psi, wp_rb, gp_scf,
):  # fmt: skip
    """The pressure and influx responses of a solved history to perturbed parameters (row j of
    each input: G [scf], p_i [psia], p_i/z_i, G B_gi [rb] and kernel; ``fresh[j]`` when the
    influx at fixed pressures changes). Row 0 is the solved point itself (``fresh[0]`` False).

    dp_j = −(∂R/∂p)⁻¹ (R(p, We_j; θ_j) − R(p, We_0; θ_0)) by forward substitution with ∂R/∂p
    = diag(c) − diag(a) T(m) at the solved point (:meth:`.tank_solver.TankSolver.linear_responses`
    in numpy), and We_j + T(m) dp_j. Returns (dp, We) of shape (parameters, steps).
    """
    k, n = kernels.shape
    phi = np.empty(n)
    dphi = np.empty(n)
    for i in range(n):
        phi[i], dphi[i] = _interp_pair(p[i], tab_p, tab_phi, tab_dphi)
    r0 = np.empty(n)
    a = np.empty(n)
    c = np.empty(n)
    g0, pi0, pz_i0, gpv0 = gs_scf[0], pis[0], pz_is[0], gpvs_rb[0]
    for i in range(n):
        u = phi[i] / pz_i0
        d = 1.0 - ce_per_psi * (pi0 - p[i]) - (we0_rb[i] - wp_rb[i]) / gpv0
        r0[i] = u * d - (1.0 - gp_scf[i] / g0)
        a[i] = u / gpv0
        c[i] = dphi[i] / pz_i0 * d + u * ce_per_psi
    dp = np.empty((k, n))
    we_out = np.empty((k, n))
    width = _support(m)
    for j in range(1, k):
        we = influx_rb(kernels[j], offsets, coefs, pis[j], p) if fresh[j] else we0_rb
        g, pi, pz_i, gpv = gs_scf[j], pis[j], pz_is[j], gpvs_rb[j]
        for i in range(n):  # (diag(c) − diag(a) T(m)) dp = −(R_j − R_0), and We_j + T(m) dp
            u = phi[i] / pz_i
            d = 1.0 - ce_per_psi * (pi - p[i]) - (we[i] - wp_rb[i]) / gpv
            s = 0.0
            for q in range(max(0, i - width + 1), i):
                s += m[i - q] * dp[j, q]
            dp[j, i] = (-(u * d - (1.0 - gp_scf[i] / g) - r0[i]) + a[i] * s) / (c[i] - a[i] * m[0])
            we_out[j, i] = we[i] + (s + m[0] * dp[j, i])
    return dp[1:], we_out[1:]


@njit(cache=True, nogil=True)
def table_column(log_td_nodes, log_f, slope, bounded, td_step, n):
    """f(t_D k) for k = 1..n from a :class:`.dimensionless.DimensionlessTable`'s nodes (the same
    cubic Hermite in ln t_D and the same continuations: slope ½ below the table, the plateau
    above a bounded one). NaN marks a t_D beyond an unbounded table (the caller raises)."""
    out = np.empty(n)
    count = log_td_nodes.size
    x0, x1 = log_td_nodes[0], log_td_nodes[count - 1]
    h = (x1 - x0) / (count - 1)
    for k in range(n):
        x = np.log(td_step * (k + 1))
        if x < x0:
            y = log_f[0] + 0.5 * (x - x0)
        elif x > x1:
            if not bounded:
                out[k] = np.nan
                continue
            y = log_f[count - 1]
        else:
            i = min(int((x - x0) / h), count - 2)
            u = (x - log_td_nodes[i]) / h
            y0, y1 = log_f[i], log_f[i + 1]
            m0, m1 = slope[i] * h, slope[i + 1] * h
            u2 = u * u
            u3 = u2 * u
            y = (2 * u3 - 3 * u2 + 1) * y0 + (u3 - 2 * u2 + u) * m0 + (3 * u2 - 2 * u3) * y1 + (u3 - u2) * m1
        out[k] = np.exp(y)
    return out
