"""A forward gas tank with a van Everdingen-Hurst radial aquifer (test oracle).

Written separately from the engine's aquifer code and history match, which it is used
to test: it shares only the z-factor (through :mod:`.tank`'s z table). W_D comes from
the Edwardson et al. (1962) rational fit (infinite aquifer) or from a Gaver-Stehfest
inversion with real-argument Bessel functions (bounded aquifer), both coded here.

Each step n solves, by bracketing root finding, the tank balance of :mod:`.tank`

    (p/z)/(p_i/z_i) · [1 − c_e (p_i − p) − We(p)/PV_gi] = 1 − G_p/G

with We(t_n) = U Σ_{j<n} Δp_j W_D(t_Dn − t_Dj), Δp_0 = (p_i − p_1)/2,
Δp_j = (p_{j−1} − p_{j+1})/2: the last term depends on p_n itself.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import factorial, log

import numpy as np
from scipy import special
from scipy.optimize import brentq

from ..engine.units import FT3_PER_BBL, OILFIELD_60F, degR_from_degF
from .tank import TankHistory, TankSpec, _ZTable


@dataclass(frozen=True)
class VehAquifer:
    u_rb_per_psi: float
    td_per_day: float
    red: float | None = None  # outer radius / reservoir radius; None = infinite


def wd_edwardson_fit(td):
    """Infinite radial W_D, Edwardson et al. (1962), JPT 14(4) 416, three ranges."""
    t = np.asarray(td, float)
    out = np.empty_like(t)
    a = t < 0.01
    b = (t >= 0.01) & (t <= 200.0)
    c = t > 200.0
    out[a] = 2.0 * np.sqrt(t[a] / np.pi)
    tb = t[b]
    out[b] = (1.12838 * tb**0.5 + 1.19328 * tb + 0.269872 * tb**1.5 + 0.00855294 * tb**2) / (
        1.0 + 0.616599 * tb**0.5 + 0.0413008 * tb
    )
    out[c] = (-4.29881 + 2.02566 * t[c]) / np.log(t[c])
    return out


def _stehfest_v(n: int = 14):
    h = n // 2
    v = []
    for i in range(1, n + 1):
        acc = 0.0
        for k in range((i + 1) // 2, min(i, h) + 1):
            acc += (
                k**h
                * factorial(2 * k)
                / (
                    factorial(h - k)
                    * factorial(k)
                    * factorial(k - 1)
                    * factorial(i - k)
                    * factorial(2 * k - i)
                )
            )
        v.append((-1) ** (i + h) * acc)
    return np.array(v)


_V = _stehfest_v()


def wd_bounded_stehfest(td, red: float):
    """Bounded radial W_D (no flow at r_eD) by Gaver-Stehfest, N = 14, real s only."""
    t = np.atleast_1d(np.asarray(td, float))
    s = (log(2.0) / t)[:, None] * np.arange(1, _V.size + 1)[None, :]
    x = np.sqrt(s)
    y = red * x
    # Scaled Bessel functions: I(z) = ive e^z, K(z) = kve e^-z; the common factor is e^(y-x).
    q = np.exp(-2.0 * (y - x))
    num = special.ive(1, y) * special.kve(1, x) - special.kve(1, y) * special.ive(1, x) * q
    den = special.kve(1, y) * special.ive(0, x) * q + special.ive(1, y) * special.kve(0, x)
    fbar = num / (den * s**1.5)
    return log(2.0) / t * (fbar * _V[None, :]).sum(axis=1)


def simulate_veh(spec: TankSpec, aquifer: VehAquifer, t_days, rate_mscf_per_day) -> TankHistory:
    """Step a tank with a van Everdingen-Hurst radial aquifer through a rate schedule.

    Parameters
    ----------
    spec : TankSpec
        Tank properties (``spec.aquifer`` and ``spec.second_tank`` are ignored).
    aquifer : VehAquifer
    t_days : array
        Step end times after the start [days], increasing.
    rate_mscf_per_day : array
        Withdrawal rate over each step [Mscf/d].
    """
    t = np.asarray(t_days, float)
    rate = np.asarray(rate_mscf_per_day, float)
    zt = _ZTable(spec.fluid, spec.temperature_degF, spec.initial_pressure_psia)
    pi = spec.initial_pressure_psia
    zi = float(zt(pi))
    t_degR = degR_from_degF(spec.temperature_degF)
    g_scf = spec.giip_bscf * 1e9
    pvgi_rcf = g_scf * OILFIELD_60F.p_sc_psia / OILFIELD_60F.t_sc_degR * zi * t_degR / pi

    def wd(td):
        if aquifer.red is None:
            return wd_edwardson_fit(td)
        return wd_bounded_stehfest(td, aquifer.red)

    td = np.concatenate([[0.0], aquifer.td_per_day * t])
    p_hist = [pi]  # p_0 .. p_{n-1}
    dps: list[float] = []  # Δp_0 .. Δp_{n-2}, known before step n
    gp = 0.0
    out = np.empty((t.size, 2))
    prev_t = 0.0
    for n in range(1, t.size + 1):
        gp += rate[n - 1] * 1e3 * (t[n - 1] - prev_t)
        prev_t = t[n - 1]
        w = wd(td[n] - td[:n])  # W_D(t_Dn - t_Dj), j = 0..n-1
        known = float(np.dot(dps, w[:-1])) if dps else 0.0
        p_before = p_hist[n - 2] if n >= 2 else pi

        def we_rb(p, known=known, p_before=p_before, w_last=w[-1]):
            return aquifer.u_rb_per_psi * (known + 0.5 * (p_before - p) * w_last)

        def resid(p, gp=gp, we_rb=we_rb):
            shrink = spec.ce_per_psi * (pi - p) + we_rb(p) * FT3_PER_BBL / pvgi_rcf
            return p / float(zt(p)) / (pi / zi) * (1.0 - shrink) - (1.0 - gp / g_scf)

        p_n = brentq(resid, 15.0, pi * (1 + 1e-9), xtol=1e-9)
        dps.append(0.5 * (p_before - p_n))
        p_hist.append(p_n)
        out[n - 1] = (gp / 1e9, we_rb(p_n))
    p = np.array(p_hist[1:])
    return TankHistory(t, out[:, 0], p, np.full(t.size, np.nan), out[:, 1])
