"""Forward sensitivities of the two-tank time-march: u and du/d(parameters) in one pass.

The two-tank fit (:mod:`.multitank_fit`) needs the Jacobian of the tank fractions u_k at
every step end with respect to the common initial p/z, both GIIPs and the connection.
Differentiating each step of :func:`.multitank.simulate_star_tanks` (two-tank case) by
the chain rule and carrying the derivatives along with the state (forward sensitivity
equations of the discrete scheme, e.g. Nocedal & Wright 2006, §8.2 forward mode)
gives the exact derivative of the discrete model: the same numbers a finite difference
approximates, at the cost of one march instead of one per parameter plus one.

The flow potential Phi(p/z) is linear between table nodes, so its slope is piecewise
constant: within a step the slopes d0, d1 (at the start, then at the predicted
midpoint) have zero derivative, and only the corrector pass carries sensitivities.
A potential clipped at zero, or a tank emptied (u clipped at 0), has zero derivative,
as the one-sided finite difference would see.
"""

from __future__ import annotations

import math

import numpy as np

from .. import accel
from .multitank import PotentialTable

#: Order of the sensitivity columns: the common initial p/z [psia], G0, G1 [scf], Gamma.
PARAMETERS = ("initial_pz_psia", "giip0_scf", "giip1_scf", "gamma")


def simulate_two_with_sensitivities(g0, g1, gam, pzi, pot: PotentialTable, step_days, withdrawal_scf):
    """Tank fractions (u0, u1) at the start and every step end, with their derivatives.

    Same scheme and arguments as :func:`.multitank.simulate_star_tanks` for two tanks
    (``g0``, ``g1`` [scf], ``gam`` the connection, ``pzi`` [psia]; ``step_days`` and
    ``withdrawal_scf`` of shape (steps,) and (steps, 2)). Interpreted on Python lists, or
    compiled when :mod:`..accel` is enabled (the same arithmetic in the same order).

    Returns
    -------
    numpy.ndarray
        Shape (steps + 1, 10): per step end (and the start) u0, u1, then d u0 and d u1 by
        (p/z_i [1/psia], G0 [1/scf], G1 [1/scf], Gamma) in the order of :data:`PARAMETERS`.
    """
    args = (float(g0), float(g1), float(gam), float(pzi))
    n = len(step_days)
    if accel.enabled():
        phi, slope = pot.arrays()
        out = np.zeros((n + 1, 10))
        out[0, :2] = 1.0
        steps = np.asarray(step_days, dtype=float)
        withdrawn = np.asarray(withdrawal_scf, dtype=float).reshape(-1, 2)
        accel.compiled(_march)(
            *args, phi, slope, float(pot.step_psia), float(pot.pz0_psia), steps, withdrawn, out
        )
        return out
    # Python floats and lists: numpy scalars would make every operation several times slower.
    out = [[1.0, 1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0]] + [[0.0] * 10 for _ in range(n)]
    steps = step_days.tolist() if isinstance(step_days, np.ndarray) else step_days
    withdrawn = withdrawal_scf.tolist() if isinstance(withdrawal_scf, np.ndarray) else withdrawal_scf
    _march(*args, pot.phi_psi2, pot.slopes, pot.step_psia, pot.pz0_psia, steps, withdrawn, out)
    return np.array(out)


def _march(g0, g1, gam, pzi, phi, slope, h, x0, step_days, withdrawal_scf, out):
    """The march on sequences (lists in Python, arrays compiled): fills ``out`` (rows of 10)."""
    inv_h = 1.0 / h
    last = len(phi) - 2
    k0, k1 = pzi / g0, pzi / g1
    u0 = u1 = 1.0
    a0 = a1 = a2 = a3 = 0.0  # du0/d(pzi, g0, g1, gam)
    b0 = b1 = b2 = b3 = 0.0  # du1/d(...)
    for n in range(len(step_days)):
        dt, w0, w1 = step_days[n], withdrawal_scf[n][0], withdrawal_scf[n][1]
        x = (pzi * u0 - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        if i > last:
            i = last
        s0 = slope[i]
        p0 = phi[i] + s0 * (x - i) * h
        x = (pzi * u1 - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        if i > last:
            i = last
        s1 = slope[i]
        p1 = phi[i] + s1 * (x - i) * h
        diff = (p1 if p1 > 0.0 else 0.0) - (p0 if p0 > 0.0 else 0.0)
        # d diff: dPhi = slope * d(pzi u), zero where the potential is clipped.
        c0 = s0 if p0 > 0.0 else 0.0
        c1 = s1 if p1 > 0.0 else 0.0
        e0 = c1 * (u1 + pzi * b0) - c0 * (u0 + pzi * a0)
        e1 = c1 * pzi * b1 - c0 * pzi * a1
        e2 = c1 * pzi * b2 - c0 * pzi * a2
        e3 = c1 * pzi * b3 - c0 * pzi * a3
        a = gam * dt
        d0, d1 = s0, s1
        # Predictor: slopes at the start; only the midpoint slopes it picks are used.
        lam = (d1 * k1 + d0 * k0) * a
        if lam < 1e-4:  # (1 - e^-lam)/lam and (lam - 1 + e^-lam)/lam^2, by series near 0
            f1, f2 = 1.0 - lam / 2.0 + lam * lam / 6.0, 0.5 - lam / 6.0 + lam * lam / 24.0
        else:
            e = -math.expm1(-lam)
            f1, f2 = e / lam, (lam - e) / (lam * lam)
        s = a * (f1 * diff + f2 * (d0 * k0 * w0 - d1 * k1 * w1))
        m0 = u0 + (s - w0) / g0
        m1 = u1 - (s + w1) / g1
        x = (pzi * 0.5 * (u0 + m0) - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        d0 = slope[i if i <= last else last]
        x = (pzi * 0.5 * (u1 + m1) - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        d1 = slope[i if i <= last else last]
        # Corrector, with its derivatives.
        lam = (d1 * k1 + d0 * k0) * a
        if lam < 1e-4:
            f1, f2 = 1.0 - lam / 2.0 + lam * lam / 6.0, 0.5 - lam / 6.0 + lam * lam / 24.0
            g1p = -0.5 + lam / 3.0
            g2p = -1.0 / 6.0 + lam / 12.0
        else:
            e = -math.expm1(-lam)
            f1, f2 = e / lam, (lam - e) / (lam * lam)
            g1p = (math.exp(-lam) - f1) / lam
            g2p = (f1 - 2.0 * f2) / lam
        q0, q1 = d0 * k0, d1 * k1
        bterm = q0 * w0 - q1 * w1
        inner = f1 * diff + f2 * bterm
        s = a * inner
        # d lam and d bterm by (pzi, g0, g1, gam); k = pzi / g.
        l0 = (d1 / g1 + d0 / g0) * a
        l1 = -q0 / g0 * a
        l2 = -q1 / g1 * a
        l3 = lam / gam if gam > 0.0 else (q1 + q0) * dt
        t0 = bterm / pzi
        t1 = -q0 * w0 / g0
        t2 = q1 * w1 / g1
        ds0 = a * (g1p * l0 * diff + f1 * e0 + g2p * l0 * bterm + f2 * t0)
        ds1 = a * (g1p * l1 * diff + f1 * e1 + g2p * l1 * bterm + f2 * t1)
        ds2 = a * (g1p * l2 * diff + f1 * e2 + g2p * l2 * bterm + f2 * t2)
        ds3 = dt * inner + a * (g1p * l3 * diff + f1 * e3 + g2p * l3 * bterm)
        m0 = u0 + (s - w0) / g0
        m1 = u1 - (s + w1) / g1
        if m0 > 0.0:
            u0 = m0
            a0, a1, a2, a3 = (
                a0 + ds0 / g0,
                a1 + ds1 / g0 - (s - w0) / (g0 * g0),
                a2 + ds2 / g0,
                a3 + ds3 / g0,
            )
        else:
            u0 = 0.0
            a0 = a1 = a2 = a3 = 0.0
        if m1 > 0.0:
            u1 = m1
            b0, b1, b2, b3 = (
                b0 - ds0 / g1,
                b1 - ds1 / g1,
                b2 - ds2 / g1 + (s + w1) / (g1 * g1),
                b3 - ds3 / g1,
            )
        else:
            u1 = 0.0
            b0 = b1 = b2 = b3 = 0.0
        row = out[n + 1]
        row[0], row[1], row[2], row[3], row[4] = u0, u1, a0, a1, a2
        row[5], row[6], row[7], row[8], row[9] = a3, b0, b1, b2, b3
