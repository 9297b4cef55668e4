"""Multi-tank gas material balance: volumetric tanks connected by gas flow.

Each tank k holds G_k of gas initially (scf) at a common initial p/z. With
u_k = n_k / G_k the fraction of its gas still in place, a volumetric tank has

    (p/z)_k = (p_i/z_i) u_k
    G_k du_k/dt = -w_k(t) + sum_j q_jk

and the flow between connected tanks is written in the pressure-squared form

    q_jk = Gamma'_jk (p_j^2 - p_k^2)            [scf/d], Gamma' in scf/d/psi^2

(Payne 1996, SPE-36702-PA; Hagoort & Hoogstra 1997 — both from memory; domain reference
§4.2), or in the pseudo-pressure form q_jk = Gamma_jk (m(p_j) - m(p_k)) with
m(p) = 2 int p/(mu z) dp, the default of the fit. Gamma' = Gamma/(mu z)avg is the
low-pressure approximation; since mu z falls by about 40 % between 5000 and 2000 psia the
pseudo-pressure form is the one that reproduces check value 27.

The network is a star: tank 0 holds the producing wells and every other tank connects
to it only (a hidden neighbour across a leaky fault, or labelled compartments). Each
step integrates the linearised exchange exactly (see :func:`simulate_star_tanks`); for
two tanks the loop is plain Python floats, since a fit calls it a few hundred times.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from ..pvt.pseudopressure import pseudo_pressure_psi2_per_cp


@dataclass(frozen=True)
class PotentialTable:
    """Phi = p^2 [psi^2] as a function of p/z [psia], on a uniform p/z grid.

    Built once per field from z(p) at reservoir temperature; p/z is monotone in p for
    a gas (d(p/z)/dp = c_g p/z > 0), so the inverse is single-valued.
    """

    pz0_psia: float
    step_psia: float
    phi_psi2: tuple[float, ...]
    name: str = "pressure_squared"

    @property
    def slopes(self) -> tuple[float, ...]:
        """dPhi/d(p/z) on each interval (cached: the simulator reads it every call)."""
        cached = self.__dict__.get("_slopes")
        if cached is None:
            phi = self.phi_psi2
            cached = tuple((b - a) / self.step_psia for a, b in zip(phi[:-1], phi[1:], strict=True))
            object.__setattr__(self, "_slopes", cached)
        return cached

    def arrays(self) -> tuple[np.ndarray, np.ndarray]:
        """(Phi, slopes) as float arrays, for compiled code (cached)."""
        cached = self.__dict__.get("_arrays")
        if cached is None:
            cached = (np.array(self.phi_psi2, dtype=float), np.array(self.slopes, dtype=float))
            object.__setattr__(self, "_arrays", cached)
        return cached

    @property
    def pz_max_psia(self) -> float:
        return self.pz0_psia + self.step_psia * (len(self.phi_psi2) - 1)

    def __call__(self, pz_psia: float) -> tuple[float, float]:
        """(Phi, dPhi/d(p/z)) at one p/z, linear between nodes and beyond the ends."""
        phi = self.phi_psi2
        x = (pz_psia - self.pz0_psia) / self.step_psia
        i = int(x) if x > 0.0 else 0
        last = len(phi) - 2
        if i > last:
            i = last
        slope = (phi[i + 1] - phi[i]) / self.step_psia
        value = phi[i] + slope * (x - i) * self.step_psia
        if value < 0.0:  # below the table (nearly empty tank): no flow potential left
            return 0.0, 0.0
        return value, slope


POTENTIALS = ("pressure_squared", "pseudo_pressure")


def potential_table(
    z_of_p, p_max_psia: float, *, method: str = "pressure_squared", viscosity_cp_of_p=None, nodes: int = 600
) -> PotentialTable:
    """Tabulate the flow potential against p/z.

    Parameters
    ----------
    z_of_p : callable
        z-factor at reservoir temperature as a function of pressure [psia] (vectorised).
    p_max_psia : float
        Highest pressure the table must cover [psia] (use well above the initial pressure).
    method : {"pressure_squared", "pseudo_pressure"}
        ``pressure_squared``: Phi = p^2 [psi^2]; ``pseudo_pressure``: the real-gas
        pseudo-pressure m(p) = 2 int_0^p p'/(mu z) dp' [psi^2/cP] (Al-Hussainy, Ramey &
        Crawford 1966 — from memory), integrated by the trapezoidal rule on a fine grid.
    viscosity_cp_of_p : callable, optional
        Gas viscosity [cP] at reservoir temperature as a function of pressure [psia]
        (vectorised); required for ``pseudo_pressure``.
    """
    if method not in POTENTIALS:
        raise ValueError(f"unknown flow-potential method {method!r}; known: {', '.join(POTENTIALS)}")
    if not p_max_psia > 15.0:
        raise InputRangeError("the potential table needs a maximum pressure above 15 psia")
    p = np.linspace(1.0, p_max_psia, nodes)
    z = np.asarray(z_of_p(p), float)
    pz = p / z
    if np.any(np.diff(pz) <= 0):
        raise InputRangeError("p/z is not increasing with pressure: check the z-factor source")
    if method == "pressure_squared":
        phi = p**2
    else:
        if viscosity_cp_of_p is None:
            raise ValueError("the pseudo-pressure potential needs a gas viscosity function")
        phi = pseudo_pressure_psi2_per_cp(p, z, viscosity_cp_of_p(p))
    grid = np.linspace(pz[0], pz[-1], nodes)
    return PotentialTable(
        float(grid[0]), float(grid[1] - grid[0]), tuple(np.interp(grid, pz, phi).tolist()), method
    )


def simulate_star_tanks(
    giip_scf,
    gamma_scf_per_day_psi2,
    initial_pz_psia: float,
    potential: PotentialTable,
    step_days,
    withdrawal_scf,
    initial_fractions=None,
):
    """Fractions of gas in place u_k at each step end of a star network of tanks.

    Within a step the potential differences x_j = Phi_j - Phi_0 are linearised about the
    step's midpoint (one predictor pass, one corrector pass), which makes them a linear
    ODE dx/dt = -A x + c that is integrated exactly; the volume each connection carries
    over the step follows, and every tank's balance is then exact. The scheme is second
    order for slow exchange and stays stable and monotone when the exchange is much faster
    than a step (A dt >> 1), where backward Euler would be first order and the
    trapezoidal rule would ring.

    Parameters
    ----------
    giip_scf : sequence of float
        Initial gas in place of each tank [scf]; tank 0 is the hub.
    gamma_scf_per_day_psi2 : sequence of float
        Connection of tank j (j = 1..N-1) to tank 0 [scf/d/psi^2].
    initial_pz_psia : float
        Common initial p/z [psia].
    potential : PotentialTable
    step_days : sequence of float
        Length of each step [days].
    withdrawal_scf : sequence of sequence of float
        Gas withdrawn from each tank in each step [scf], shape (steps, N), at a constant
        rate within the step.
    initial_fractions : sequence of float, optional
        u at the start (default all ones, the initial state): a network can be stepped
        on from where an earlier call ended (the forecast does, month by month).

    Returns
    -------
    list of list of float
        u at the start and at every step end, shape (steps + 1, N). A tank
        that would be emptied stays at u = 0 (the trial parameters are then infeasible
        and the fit sees a large misfit).
    """
    g = [float(x) for x in giip_scf]
    gam = [float(x) for x in gamma_scf_per_day_psi2]
    if len(gam) != len(g) - 1:
        raise ValueError("need one connection per non-hub tank")
    if min(g) <= 0 or min(gam, default=1.0) < 0:
        raise InputRangeError("every tank needs a positive gas in place and connections must not be negative")
    pzi = float(initial_pz_psia)
    u = [1.0] * len(g) if initial_fractions is None else [float(x) for x in initial_fractions]
    if len(u) != len(g):
        raise ValueError("need one initial fraction per tank")
    if len(g) == 2:
        return _simulate_two(g[0], g[1], gam[0], pzi, potential, step_days, withdrawal_scf, u)
    out = [list(u)]
    for dt, w in zip(step_days, withdrawal_scf, strict=True):
        w = [float(x) for x in w]
        s = _transfer_star(u, u, g, gam, pzi, potential, dt, w)
        mid = [0.5 * (a + b) for a, b in zip(u, _advance(u, s, g, w), strict=True)]
        s = _transfer_star(u, mid, g, gam, pzi, potential, dt, w)
        u = _advance(u, s, g, w)
        out.append(u)
    return out


def _simulate_two(g0, g1, gam, pzi, pot: PotentialTable, step_days, withdrawal_scf, start=(1.0, 1.0)):
    """The two-tank case of :func:`simulate_star_tanks`, inlined: a fit calls it often."""
    phi, slope = pot.phi_psi2, pot.slopes
    h = pot.step_psia
    inv_h = 1.0 / h
    x0 = pot.pz0_psia
    last = len(phi) - 2
    expm1 = math.expm1
    k0, k1 = pzi / g0, pzi / g1
    u0, u1 = start
    out = [(u0, u1)]
    for dt, (w0, w1) in zip(step_days, withdrawal_scf, strict=True):
        x = (pzi * u0 - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        if i > last:
            i = last
        d0 = slope[i]
        p0 = phi[i] + d0 * (x - i) * h
        x = (pzi * u1 - x0) * inv_h
        i = int(x) if x > 0.0 else 0
        if i > last:
            i = last
        d1 = slope[i]
        p1 = phi[i] + d1 * (x - i) * h
        diff = (p1 if p1 > 0.0 else 0.0) - (p0 if p0 > 0.0 else 0.0)
        a = gam * dt
        for corrector in (False, True):  # slopes at the start, then at the predicted midpoint
            lam = (d1 * k1 + d0 * k0) * a
            if lam < 1e-4:
                f1 = 1.0 - lam / 2.0 + lam * lam / 6.0
                f2 = 0.5 - lam / 6.0 + lam * lam / 24.0
            else:
                e = -expm1(-lam)
                f1 = e / lam
                f2 = (lam - e) / (lam * lam)
            s = a * (f1 * diff + f2 * (d0 * k0 * w0 - d1 * k1 * w1))
            m0 = u0 + (s - w0) / g0
            m1 = u1 - (s + w1) / g1
            if corrector:
                break
            x = (pzi * 0.5 * (u0 + m0) - x0) * inv_h
            i = int(x) if x > 0.0 else 0
            d0 = slope[i if i <= last else last]
            x = (pzi * 0.5 * (u1 + m1) - x0) * inv_h
            i = int(x) if x > 0.0 else 0
            d1 = slope[i if i <= last else last]
        u0 = m0 if m0 > 0.0 else 0.0
        u1 = m1 if m1 > 0.0 else 0.0
        out.append((u0, u1))
    return out


def _advance(u, s, g, w):
    """Tank fractions after withdrawals w and transfers s into the hub [scf]."""
    new = [u[0] + (sum(s) - w[0]) / g[0]]
    new += [u[j] - (s[j - 1] + w[j]) / g[j] for j in range(1, len(g))]
    return [x if x > 0.0 else 0.0 for x in new]


def _phi12(z: float) -> tuple[float, float]:
    """phi1 = (1 - e^-z)/z and phi2 = (z - 1 + e^-z)/z^2, accurate near z = 0.

    For dx/dt = -lam x + c, the integral of x over a step h is
    h phi1(lam h) x0 + h^2 phi2(lam h) c.
    """
    if z < 1e-4:
        return 1.0 - z / 2.0 + z * z / 6.0, 0.5 - z / 6.0 + z * z / 24.0
    e = -math.expm1(-z)
    return e / z, (z - e) / (z * z)


def _transfer_star(u, at, g, gam, pzi, pot, dt, w):
    """Volumes carried into the hub over one step, N > 2 tanks (eigen-decomposition)."""
    n = len(g) - 1
    phi = np.array([pot(pzi * x)[0] for x in u])
    d = np.array([pot(pzi * x)[1] for x in at])
    gv, gamv, wv = np.asarray(g), np.asarray(gam), np.asarray(w) / dt
    beta = d[0] * pzi / gv[0]
    # dx/dt = -A x + c; A = diag(alpha) + beta 1 Gamma^T has real non-negative eigenvalues.
    a = np.diag(d[1:] * pzi * gamv / gv[1:]) + beta * np.outer(np.ones(n), gamv)
    c = -d[1:] * pzi * wv[1:] / gv[1:] + beta * wv[0]
    lam, vec = np.linalg.eig(a)
    lam, vec = lam.real, vec.real
    inv = np.linalg.inv(vec)
    f = np.array([_phi12(max(z, 0.0) * dt) for z in lam])
    integral = vec @ (dt * f[:, 0] * (inv @ (phi[1:] - phi[0])) + dt * dt * f[:, 1] * (inv @ c))
    return (gamv * integral).tolist()
