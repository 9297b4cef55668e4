"""Aquifer influx over a boundary-pressure history (field-unit constants: :mod:`.constants`).

Models (domain reference §3):

* van Everdingen-Hurst (1949): superposition of constant-pressure steps,
  We(t_n) = U Σ_{j<n} Δp_j W_D(t_Dn − t_Dj), with the step convention
  Δp_0 = (p_i − p_1)/2, Δp_j = (p_{j−1} − p_{j+1})/2 (Craft & Hawkins; §3.1);
* Fetkovich (1971) pseudo-steady state, stepwise:
  ΔWe_n = (Wei/p_i)(p̄a,n−1 − p̄_n)(1 − e^{−J p_i Δt_n / Wei}), p̄_n = (p_{n−1} + p_n)/2;
* pot aquifer: We = c_t W_i (p_i − p);
* Carter-Tracy (1960): a step update without superposition (an approximation).

A pressure history is given at step ends t_1 < ... < t_N [days after the start of
depletion, t_0 = 0, where p_0 = p_i]. Influx is in reservoir barrels.

The superposition and Fetkovich sums are written as lower-triangular matrices acting
on a vector of pressure drops, so the history match can solve the material balance
for the whole pressure history at once (:mod:`.history_match`).

References
----------
van Everdingen & Hurst (1949), Trans. AIME 186, 305-324, doi:10.2118/949305-G.
Fetkovich, M.J. (1971). A simplified approach to water influx calculations - finite
    aquifer systems. JPT 23(7), 814-828, SPE-2603-PA (equations as in Dake 1978, 9.23-9.28).
Carter, R.D. and Tracy, G.W. (1960). An improved method for calculating water influx.
    Trans. AIME 219, 415-417.
Dake, L.P. (1978). Fundamentals of Reservoir Engineering, Elsevier, ch. 9.
"""

from __future__ import annotations

import numpy as np

from .constants import positive_arguments
from .dimensionless import influx_table, pd_table_radial_infinite, wd_edwardson, wd_linear_infinite

WD_METHODS = ("laplace", "edwardson")


def dimensionless_influx(td, geometry: str = "radial", red: float | None = None, method: str = "laplace"):
    """W_D(t_D) of a radial or linear aquifer, infinite (red None) or bounded.

    ``method`` "laplace" uses the tabulated Laplace inversion; "edwardson" the
    Edwardson et al. (1962) fit (infinite radial only).
    """
    if method == "edwardson":
        if geometry != "radial" or red is not None:
            raise ValueError("the Edwardson et al. fit covers only the infinite radial aquifer")
        return wd_edwardson(td)
    if method != "laplace":
        raise ValueError(f"unknown W_D method {method!r}; choose one of {WD_METHODS}")
    if geometry == "linear" and red is None:
        return wd_linear_infinite(td)
    return influx_table(geometry, red)(td)


def _check_history(t_days, p_psia):
    t = np.asarray(t_days, float)
    p = np.asarray(p_psia, float)
    if t.ndim != 1 or t.shape != p.shape:
        raise ValueError("t_days and p_psia must be 1-D arrays of equal length")
    if t.size and (t[0] <= 0 or np.any(np.diff(t) <= 0)):
        raise ValueError("step times must be > 0 (days after the start) and strictly increasing")
    if not np.all(np.isfinite(p)):
        raise ValueError("pressures must be finite")
    return t, p


def step_pressure_drops(initial_pressure_psia: float, p_psia) -> np.ndarray:
    """Δp_0 = (p_i − p_1)/2, Δp_j = (p_{j−1} − p_{j+1})/2: the classic step convention (§3.1)."""
    p = np.asarray(p_psia, float)
    ext = np.concatenate([[initial_pressure_psia, initial_pressure_psia], p])
    return 0.5 * (ext[:-2] - ext[2:])


def superposition_lags_days(t_days) -> np.ndarray:
    """lag[n−1, j] = t_n − t_j for j < n (t_0 = 0), and 0 above the diagonal."""
    t = np.asarray(t_days, float)
    t_start = np.concatenate([[0.0], t[:-1]])
    return np.tril(t[:, None] - t_start[None, :])


def _uniform_step_days(t: np.ndarray) -> float | None:
    """The step length when t = dt, 2 dt, ... (to 1e-9 relative), else None."""
    if t.size < 2:
        return float(t[0]) if t.size else None
    dt = t[0]
    return float(dt) if np.allclose(t, dt * np.arange(1, t.size + 1), rtol=1e-9, atol=0.0) else None


def lower_toeplitz(first_column) -> np.ndarray:
    """The lower-triangular Toeplitz matrix T[i, j] = c[i − j] (j <= i), as a new array."""
    c = np.asarray(first_column, float)
    n = c.size
    v = np.concatenate([np.zeros(n - 1), c])
    step = v.strides[0]
    # T[i, j] = v[n − 1 + i − j]: a strided view of v starting at v[n − 1].
    view = np.lib.stride_tricks.as_strided(v[n - 1 :], shape=(n, n), strides=(step, -step), writeable=False)
    return view.copy()


def veh_kernel_column(
    dt_days: float,
    n: int,
    td_per_day: float,
    geometry: str = "radial",
    red: float | None = None,
    method: str = "laplace",
) -> np.ndarray:
    """W_D(t_D k Δt), k = 1..n: the first column of the superposition matrix on a uniform grid."""
    return dimensionless_influx(td_per_day * dt_days * np.arange(1, n + 1), geometry, red, method)


def fetkovich_kernel_column(dt_days: float, n: int, ct_wi_rb_per_psi: float, decay_per_day: float):
    """(Wei/p_i)(1 − e^{−λΔt}) e^{−λ k Δt}, k = 0..n−1: the Fetkovich kernel on a uniform grid."""
    return (
        ct_wi_rb_per_psi
        * -np.expm1(-decay_per_day * dt_days)
        * np.exp(-decay_per_day * dt_days * np.arange(n))
    )


def causal_convolution(kernel_column, x) -> np.ndarray:
    """y = T x for the lower-triangular Toeplitz T with first column ``kernel_column``."""
    c = np.asarray(kernel_column, float)
    return np.convolve(c, np.asarray(x, float))[: c.size]


def veh_superposition_matrix(
    t_days, td_per_day: float, geometry: str = "radial", red: float | None = None, method: str = "laplace"
) -> np.ndarray:
    """W[n−1, j] = W_D(t_D (t_n − t_j)) for j < n, else 0, so that We = U W Δp.

    On a uniform grid W is Toeplitz and W_D is evaluated at N lags only.
    """
    t = np.asarray(t_days, float)
    dt = _uniform_step_days(t)
    if dt is not None:
        return lower_toeplitz(veh_kernel_column(dt, t.size, td_per_day, geometry, red, method))
    lags = superposition_lags_days(t)
    out = np.zeros_like(lags)
    mask = lags > 0
    out[mask] = dimensionless_influx(td_per_day * lags[mask], geometry, red, method)
    return out


def influx_van_everdingen_hurst(
    t_days,
    p_psia,
    *,
    initial_pressure_psia: float,
    u_rb_per_psi: float,
    td_per_day: float,
    geometry: str = "radial",
    red: float | None = None,
    method: str = "laplace",
) -> np.ndarray:
    """Cumulative influx at each step end by van Everdingen-Hurst superposition [rb].

    Parameters
    ----------
    t_days : array
        Step end times after the start of depletion [days], increasing.
    p_psia : array
        Boundary (tank) pressure at each step end [psia].
    initial_pressure_psia : float
    u_rb_per_psi : float
        Aquifer constant U [rb/psi].
    td_per_day : float
        Dimensionless time per day [1/day].
    geometry, red, method
        Aquifer geometry ("radial", "linear"), outer radius ratio (None: infinite),
        and how W_D is computed ("laplace", "edwardson").
    """
    t, p = _check_history(t_days, p_psia)
    drops = step_pressure_drops(initial_pressure_psia, p)
    dt = _uniform_step_days(t)
    if dt is not None:  # O(N) memory on uniform grids
        return u_rb_per_psi * causal_convolution(
            veh_kernel_column(dt, t.size, td_per_day, geometry, red, method), drops
        )
    return u_rb_per_psi * (veh_superposition_matrix(t, td_per_day, geometry, red, method) @ drops)


def fetkovich_matrix(t_days, ct_wi_rb_per_psi: float, decay_per_day: float) -> np.ndarray:
    """K[n−1, k−1] = e^{−λ(t_n − t_k)} (Wei/p_i)(1 − e^{−λ Δt_k}) for k <= n, λ = J p_i / Wei.

    The stepwise Fetkovich recursion We_n = e^{−λΔt_n} We_{n−1} + c_n (p_i − p̄_n)
    unrolled (the product of the decay factors telescopes): We = K (p_i − p̄).
    """
    t = np.asarray(t_days, float)
    dt = _uniform_step_days(t)
    if dt is not None:
        return lower_toeplitz(fetkovich_kernel_column(dt, t.size, ct_wi_rb_per_psi, decay_per_day))
    steps = np.diff(np.concatenate([[0.0], t]))
    c = ct_wi_rb_per_psi * -np.expm1(-decay_per_day * steps)
    lags = t[:, None] - t[None, :]
    return np.tril(np.exp(-decay_per_day * np.maximum(lags, 0.0))) * c[None, :]


def step_average_pressure_drops(initial_pressure_psia: float, p_psia) -> np.ndarray:
    """p_i − p̄_n with p̄_n = (p_{n−1} + p_n)/2, p_0 = p_i (Fetkovich's stepwise average)."""
    p = np.asarray(p_psia, float)
    prev = np.concatenate([[initial_pressure_psia], p[:-1]])
    return initial_pressure_psia - 0.5 * (prev + p)


def influx_fetkovich(
    t_days, p_psia, *, initial_pressure_psia: float, wei_rb: float, j_rb_per_day_psi: float
) -> np.ndarray:
    """Cumulative influx of a Fetkovich (1971) pseudo-steady-state aquifer, stepwise form [rb].

    Parameters
    ----------
    t_days, p_psia : arrays
        Step end times [days after the start] and boundary pressures [psia].
    wei_rb : float
        Maximum encroachable water Wei = c_t W_i p_i [rb].
    j_rb_per_day_psi : float
        Aquifer productivity index J [rb/(d psi)].

    References
    ----------
    Fetkovich (1971); Dake (1978) eqs. 9.23-9.28.
    """
    t, p = _check_history(t_days, p_psia)
    positive_arguments(
        {
            "wei_rb": wei_rb,
            "j_rb_per_day_psi": j_rb_per_day_psi,
            "initial_pressure_psia": initial_pressure_psia,
        }
    )
    ct_wi = wei_rb / initial_pressure_psia
    decay = j_rb_per_day_psi / ct_wi
    drops = step_average_pressure_drops(initial_pressure_psia, p)
    dt = _uniform_step_days(t)
    if dt is not None:  # O(N) memory on uniform grids
        return causal_convolution(fetkovich_kernel_column(dt, t.size, ct_wi, decay), drops)
    return fetkovich_matrix(t, ct_wi, decay) @ drops


def influx_pot(p_psia, *, initial_pressure_psia: float, ct_wi_rb_per_psi: float):
    """We = c_t W_i (p_i − p) of a pot aquifer in instantaneous equilibrium [rb] (§3.4)."""
    return ct_wi_rb_per_psi * (initial_pressure_psia - np.asarray(p_psia, float))


def influx_carter_tracy(
    t_days, p_psia, *, initial_pressure_psia: float, u_rb_per_psi: float, td_per_day: float
) -> np.ndarray:
    """Cumulative influx of an infinite radial aquifer by Carter & Tracy (1960) [rb].

    We_n = We_{n−1} + (t_Dn − t_Dn−1)(U Δp_n − We_{n−1} P'_D(t_Dn)) / (P_D(t_Dn) − t_Dn−1 P'_D(t_Dn)),
    Δp_n = p_i − p_n, with P_D at r_D = 1 from the Laplace inversion. An approximation:
    within a few per cent of superposition (check value 23).
    """
    t, p = _check_history(t_days, p_psia)
    td = td_per_day * t
    log_pd, slope = pd_table_radial_infinite().log_value_and_slope(np.log(td))
    pd = np.exp(log_pd)
    dpd = slope * pd / td
    we = np.empty_like(td)
    prev_we, prev_td = 0.0, 0.0
    for n in range(td.size):
        dp = initial_pressure_psia - p[n]
        prev_we += (td[n] - prev_td) * (u_rb_per_psi * dp - prev_we * dpd[n]) / (pd[n] - prev_td * dpd[n])
        we[n] = prev_we
        prev_td = td[n]
    return we
