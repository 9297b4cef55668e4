"""A forward gas-tank simulator: volumetric, overpressured, aquifer-supported or two tanks.

Material balance in reservoir volume for tank 1 (the produced tank):

    n1 = G1 * [(p/z) / (pi/zi)] * [1 - ce (pi - p) - We / PVgi]

with n1 the gas remaining (scf), PVgi = G1*Bgi, ce a constant effective
compressibility and We the water influx (rcf). The pressure at each step is found by
root finding. A second tank exchanges gas with the first through a connection stepped
explicitly with substeps of at most 10 days, in one of two forms:

- pressure-squared, q12 = c' (p2^2 - p1^2) [scf/d], c' in scf/d/psi^2;
- pseudo-pressure, q12 = c (m(p2) - m(p1)) [scf/d], c in scf cP/(d psi^2), with the real-gas
  pseudo-pressure m(p) = 2 int p/(mu z) dp [psi^2/cP] (Al-Hussainy, Ramey & Crawford 1966),
  mu from Lee, Gonzalez & Eakin (1966). Tabulated here by the trapezoidal rule on the z table's
  own grid, independently of the estimators' tables (engine/compartments/multitank.py).
Aquifers: pot (We = ct Wi (pi - p)) or Fetkovich (1971) pseudo-steady state, stepped
with the average tank pressure of each step.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ..engine.pvt.gas import GasFluid, gas_density_lb_per_ft3, gas_viscosity_lee_gonzalez_eakin, z_factor
from ..engine.units import FT3_PER_BBL, OILFIELD_60F, degR_from_degF


@dataclass(frozen=True)
class PotAquifer:
    ct_wi_rb_per_psi: float  # total compressibility x initial water volume


@dataclass(frozen=True)
class FetkovichAquifer:
    wei_rb: float  # maximum encroachable water, ct*Wi*pi
    j_rb_per_day_psi: float  # productivity index of the aquifer


@dataclass(frozen=True)
class SecondTank:
    """A neighbour tank; give exactly one connection: pressure-squared (``c'``) or
    pseudo-pressure (``c``)."""

    giip_bscf: float
    connection_scf_per_day_psi2: float | None = None  # c' of q = c' (p2^2 - p1^2)
    connection_scf_cp_per_day_psi2: float | None = None  # c of q = c (m(p2) - m(p1))

    def __post_init__(self):
        if (self.connection_scf_per_day_psi2 is None) == (self.connection_scf_cp_per_day_psi2 is None):
            raise ValueError("give exactly one connection: pressure-squared or pseudo-pressure")

    @property
    def potential(self) -> str:
        return "pressure_squared" if self.connection_scf_per_day_psi2 is not None else "pseudo_pressure"


@dataclass(frozen=True)
class TankSpec:
    giip_bscf: float
    initial_pressure_psia: float
    temperature_degF: float
    fluid: GasFluid
    ce_per_psi: float = 0.0
    aquifer: PotAquifer | FetkovichAquifer | None = None
    second_tank: SecondTank | None = None


@dataclass(frozen=True)
class TankHistory:
    t_days: np.ndarray
    gp_bscf: np.ndarray
    p1_psia: np.ndarray
    p2_psia: np.ndarray  # NaN without a second tank
    we_rb: np.ndarray


class _ZTable:
    """z(p) at one temperature, tabulated once and interpolated (fast scalar calls)."""

    def __init__(self, fluid: GasFluid, t_degF: float, p_max_psia: float):
        self.p = np.linspace(14.0, p_max_psia * 1.05 + 100.0, 4000)
        self.z = z_factor(self.p, t_degF, fluid)

    def __call__(self, p):
        return np.interp(p, self.p, self.z)


class _Potential:
    """The connection's flow potential on the z table's grid: p^2 [psi^2], or the real-gas
    pseudo-pressure m(p) = 2 int p/(mu z) dp [psi^2/cP] from the table's first pressure
    (the constant of integration cancels in differences)."""

    def __init__(self, zt: _ZTable, t_degF: float, fluid: GasFluid, second: SecondTank):
        if second.potential == "pressure_squared":
            self.coefficient = second.connection_scf_per_day_psi2
            self.values = zt.p**2
        else:
            self.coefficient = second.connection_scf_cp_per_day_psi2
            rho = gas_density_lb_per_ft3(zt.p, t_degF, zt.z, fluid.gas_gravity)
            mu = gas_viscosity_lee_gonzalez_eakin(t_degF, fluid.gas_gravity, rho)
            f = 2.0 * zt.p / (mu * zt.z)
            self.values = np.concatenate([[0.0], np.cumsum(0.5 * (f[1:] + f[:-1]) * np.diff(zt.p))])
        self.p = zt.p

    def __call__(self, p):
        return float(np.interp(p, self.p, self.values))


def _bg_rcf_per_scf(p, z, t_degR):
    return OILFIELD_60F.p_sc_psia / OILFIELD_60F.t_sc_degR * z * t_degR / p


def simulate(spec: TankSpec, t_days, rate_mscf_per_day) -> TankHistory:
    """Step the tank through a withdrawal schedule.

    Parameters
    ----------
    t_days : array
        Step end times [days], ascending, starting after 0.
    rate_mscf_per_day : array or callable
        Wet-gas withdrawal rate over each step [Mscf/d]; a callable gets
        (t_days, p1_psia) and returns the rate, so deliverability can limit it.
    """
    t = np.asarray(t_days, float)
    zt = _ZTable(spec.fluid, spec.temperature_degF, spec.initial_pressure_psia)
    t_degR = degR_from_degF(spec.temperature_degF)
    pi = spec.initial_pressure_psia
    zi = float(zt(pi))
    pz_i = pi / zi
    g1 = spec.giip_bscf * 1e9
    pvgi_rcf = g1 * _bg_rcf_per_scf(pi, zi, t_degR)
    n1 = g1
    g2 = spec.second_tank.giip_bscf * 1e9 if spec.second_tank else 0.0
    n2 = g2
    pot = _Potential(zt, spec.temperature_degF, spec.fluid, spec.second_tank) if spec.second_tank else None
    p1 = p2 = pi
    we_rb = 0.0
    gp = 0.0
    out = np.empty((t.size, 4))
    t_prev = 0.0

    def pressure_for(n_scf, we_rb_of_p):
        """Tank-1 pressure that balances n_scf of gas with influx We(p) [rb]."""

        def resid(p):
            pz = p / float(zt(p))
            shrink = spec.ce_per_psi * (pi - p) + we_rb_of_p(p) * FT3_PER_BBL / pvgi_rcf
            return pz / pz_i * (1.0 - shrink) - n_scf / g1

        hi = pi * (1.0 + 1e-9)
        if resid(hi) <= 0:
            return hi
        return brentq(resid, 15.0, hi, xtol=1e-8) if resid(15.0) < 0 else 15.0

    for k, tk in enumerate(t):
        dt_days = tk - t_prev
        rate = rate_mscf_per_day(tk, p1) if callable(rate_mscf_per_day) else float(rate_mscf_per_day[k])
        # Only the explicit tank-to-tank transfer needs substeps (10 days is ample).
        nsub = max(1, int(np.ceil(dt_days / 10.0))) if spec.second_tank else 1
        h = dt_days / nsub
        for _ in range(nsub):
            q12 = 0.0
            if spec.second_tank is not None:
                q12 = pot.coefficient * (pot(p2) - pot(p1))
                n2 -= q12 * h
                p2 = _volumetric_pressure(n2 / g2, pz_i, zt, pi)
            withdrawal = rate * 1e3 * h
            gp += withdrawal
            n1 += q12 * h - withdrawal
            aq = spec.aquifer
            if isinstance(aq, FetkovichAquifer):
                decay = 1.0 - np.exp(-aq.j_rb_per_day_psi * pi * h / aq.wei_rb)
                pa = pi * (1.0 - we_rb / aq.wei_rb)
                p_start, we_start = p1, we_rb

                def we_of_p(p, p_start=p_start, we_start=we_start, pa=pa, decay=decay, aq=aq):
                    return we_start + aq.wei_rb / pi * (pa - 0.5 * (p_start + p)) * decay

            elif isinstance(aq, PotAquifer):

                def we_of_p(p, aq=aq):
                    return aq.ct_wi_rb_per_psi * (pi - p)

            else:

                def we_of_p(p):
                    return 0.0

            p1 = pressure_for(n1, we_of_p)
            we_rb = we_of_p(p1)
        out[k] = (gp / 1e9, p1, p2 if spec.second_tank else np.nan, we_rb)
        t_prev = tk
    return TankHistory(t, out[:, 0], out[:, 1], out[:, 2], out[:, 3])


def _volumetric_pressure(frac_remaining, pz_i, zt, pi):
    target = frac_remaining * pz_i
    return brentq(lambda p: p / float(zt(p)) - target, 1.0, pi * 1.0000001, xtol=1e-8)


def gas_column_pressure_psia(
    p_datum_psia, datum_depth_ft, gauge_depth_ft, t_degF, fluid: GasFluid, steps=100
):
    """Pressure at a gauge depth from the datum pressure through a static gas column.

    dp/dh = rho_g / 144 [psi/ft] with rho_g = p M / (z R T) [lb/ft3], integrated with
    fixed midpoint (RK2) steps; vectorised over surveys. Deliberately simple and
    independent of the engine's datum correction, which it is used to test.
    """
    from ..engine.units import GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR as R

    molar_mass = 28.9647 * fluid.gas_gravity
    t_degR = degR_from_degF(t_degF)
    p = np.asarray(p_datum_psia, float).copy()
    h = (np.asarray(gauge_depth_ft, float) - datum_depth_ft) / steps

    def grad(pp):
        return pp * molar_mass / (np.asarray(z_factor(pp, t_degF, fluid)) * R * t_degR) / 144.0

    for _ in range(steps):
        p_mid = p + 0.5 * h * grad(p)
        p = p + h * grad(p_mid)
    return p
