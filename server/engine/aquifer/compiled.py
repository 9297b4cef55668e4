"""The tank balance's Newton solve, compiled (numba): the history match's inner loop, used when
:mod:`..accel` is enabled (worker processes).

The same method as :meth:`.tank_solver.TankSolver.solve` in numpy (the default and the
reference the tests compare with): Newton's method on the whole pressure history, each step
one forward substitution with the lower-triangular matrix diag(c/a) − T(m). On the 24-480
steps of a field's grid numpy's cost is its per-call overhead (about 25 calls a step);
compiled, a step costs its arithmetic (issue 17). The influx drops are written generically
from the model's bands: Δ_j = Σ coef (p_{j−offset} − p_i), with p_k = p_i for k < 0
(:class:`.tank_solver.InfluxModel`; the pot, Fetkovich and van Everdingen-Hurst conventions
of :mod:`.influx` are all of this form).

Compiled on first use and cached on disk beside this file (numba's ``cache=True``); ``make
setup`` and the Docker image compile it once (``python -m server.engine.warm``). Imported only
when the compiled path runs: importing numba costs about half a second.
"""

from __future__ import annotations

import numpy as np
from numba import njit


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
    for i in range(n):
        acc = 0.0
        for j in range(i + 1):
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
    for _ in range(max_iter):
        we = influx_rb(kernel, offsets, coefs, pi, p)
        for i in range(n):
            phi, dphi = _interp_pair(p[i], tab_p, tab_phi, tab_dphi)
            u = phi / pz_i
            d = 1.0 - ce_per_psi * (pi - p[i]) - (we[i] - wp_rb[i]) / gpv_rb
            r = u * d - (1.0 - gp_scf[i] / g_scf)
            a = u / gpv_rb
            c = dphi / pz_i * d + u * ce_per_psi
            rhs[i] = -r / a
            diag[i] = c / a - m[0]
        finite = True
        for i in range(n):  # (diag(c/a) − T(m)) step = −R/a, forward substitution
            acc = rhs[i]
            for j in range(i):
                acc += m[i - j] * step[j]
            step[i] = acc / diag[i]
            if not np.isfinite(step[i]):
                finite = False
                break
        if not finite:
            return False
        moved = 0.0
        for i in range(n):
            new = min(max(p[i] + step[i], p_lo), p_hi)
            moved = max(moved, abs(new - p[i]))
            p[i] = new
        if moved < tol_psia:
            return True
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
    for j in range(1, k):
        we = influx_rb(kernels[j], offsets, coefs, pis[j], p) if fresh[j] else we0_rb.copy()
        g, pi, pz_i, gpv = gs_scf[j], pis[j], pz_is[j], gpvs_rb[j]
        for i in range(n):  # (diag(c) − diag(a) T(m)) dp = −(R_j − R_0)
            u = phi[i] / pz_i
            d = 1.0 - ce_per_psi * (pi - p[i]) - (we[i] - wp_rb[i]) / gpv
            acc = -(u * d - (1.0 - gp_scf[i] / g) - r0[i])
            s = 0.0
            for q in range(i):
                s += m[i - q] * dp[j, q]
            acc += a[i] * s
            dp[j, i] = acc / (c[i] - a[i] * m[0])
        for i in range(n):
            s = 0.0
            for q in range(i + 1):
                s += m[i - q] * dp[j, q]
            we_out[j, i] = we[i] + s
    return dp[1:], we_out[1:]
