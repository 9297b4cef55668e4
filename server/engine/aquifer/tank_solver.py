"""A gas tank with an aquifer, solved for its whole pressure history at once.

The tank balance at each step end t_n of a uniform grid (Havlena-Odeh form divided by B_g;
u = (p/z)/(p_i/z_i)):

    R_n(p) = u_n · [1 − c_e (p_i − p_n) − (We_n − W_pn B_w)/(G B_gi)] − (1 − G_pn/G) = 0

with the influx We = K Δ(p) linear in the pressures (:mod:`.influx`: K a lower-triangular
Toeplitz kernel on the uniform grid, Δ the pressure drops of the model's step convention). The
Jacobian ∂R/∂p is lower triangular, so Newton's method on the whole history costs a
few triangular solves. Model p/z at a survey time uses the survey's own cumulative
production with the influx interpolated in time between grid points (influx is
smooth; production need not be).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline
from scipy.linalg import LinAlgError, get_lapack_funcs

from .. import accel
from ..errors import InsufficientDataError
from ..inputs import FieldInputs
from ..prepare.cumulative import cumulative_at_times, production_start_t_days
from ..prepare.points import PreparedData, field_z_function
from ..pvt.gas import bg_rcf_per_scf
from ..tank.balance_terms import (
    DEFAULT_BW_RB_PER_STB,
    field_effective_compressibility_per_psi,
    produced_water_is_liquid,
)
from ..units import FT3_PER_BBL, StandardConditions
from .influx import causal_convolution, lower_toeplitz

try:  # np.interp's own kernel, bit for bit: a fit interpolates thousands of times on short
    # arrays, where np.interp's argument checks cost as much as the interpolation (issue 17)
    from numpy._core.multiarray import interp as _interp
except ImportError:  # pragma: no cover - another numpy layout
    _interp = np.interp

#: Grid steps: about one per production period, at least this many...
MIN_STEPS = 24
#: ...and at most this many (longer histories get longer steps).
MAX_STEPS = 480
_NEWTON_TOL_PSI = 1e-7
_NEWTON_MAX_ITER = 30
_TRTRS = get_lapack_funcs(("trtrs",), (np.zeros((1, 1)),))[0]


def solve_lower(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """x with a x = b for a C-ordered lower-triangular float64 ``a``: the LAPACK call that
    ``scipy.linalg.solve_triangular(a, b, lower=True, check_finite=False)`` makes (the
    transposed, Fortran-ordered system), without its argument checks, which cost three times
    the solve on the history match's 24-480 steps (issue 17)."""
    x, info = _TRTRS(a.T, b, lower=0, trans=1)
    if info > 0:
        raise LinAlgError(f"singular matrix: resolution failed at diagonal {info - 1}")
    return x


class PzTable:
    """p/z as a function of p at reservoir temperature, from the field's own z source."""

    def __init__(self, z_of_p, t_degF, p_max_psia, conditions):
        # z on a coarse grid, then a cubic spline onto the fine one: z(p) is smooth and the
        # z source is the costly part (spline error below 1e-7 in z for a correlation, ~4e-6 for a
        # lab table whose monotone cubic has curvature kinks at its nodes).
        coarse = np.linspace(14.7, p_max_psia, 161)
        spline = CubicSpline(coarse, np.asarray(z_of_p(coarse), float))
        self.p = np.linspace(14.7, p_max_psia, 3001)
        self.z = spline(self.p)
        self.phi = self.p / self.z
        if np.any(np.diff(self.phi) <= 0):
            raise InsufficientDataError("p/z does not increase with pressure over the table range")
        self.dphi = np.gradient(self.phi, self.p)
        # B_g per unit z/p [rb/scf x psia]: Bg = bg_coef * z / p
        self.bg_coef = float(bg_rcf_per_scf(1.0, t_degF, 1.0, conditions)) / FT3_PER_BBL

    def lists(self) -> tuple[list, list]:
        """(p/z, p) as Python lists, for scalar bisection (made once: the table is shared)."""
        cached = getattr(self, "_lists", None)
        if cached is None:
            cached = self._lists = (self.phi.tolist(), self.p.tolist())
        return cached

    def pz(self, p):
        return _interp(p, self.p, self.phi)  # np.interp(p, self.p, self.phi)

    def dpz(self, p):
        return _interp(p, self.p, self.dphi)

    def p_of_pz(self, pz):
        return np.interp(pz, self.phi, self.p)


@dataclass(frozen=True)
class TankGrid:
    """A field's production on a uniform step grid, and its observations (included surveys)."""

    t_start_days: float  # absolute time of the start of production
    t_days: np.ndarray  # step ends after the start: dt, 2 dt, ..., N dt
    gp_scf: np.ndarray  # cumulative (wet) gas at the step ends
    wp_rb: np.ndarray  # cumulative produced water x B_w at the step ends
    obs_t_days: np.ndarray  # survey times after the start (<= 0 before production)
    obs_gp_scf: np.ndarray
    obs_wp_rb: np.ndarray
    obs_pz_psia: np.ndarray
    obs_weight: np.ndarray
    obs_interp: np.ndarray  # (surveys, N + 1): linear interpolation from t_0 = 0, t_1..t_N
    initial_pressure_psia: float  # as given for the field
    ce_per_psi: float
    t_degF: float
    conditions: StandardConditions
    table: PzTable

    @property
    def n_steps(self) -> int:
        return int(self.t_days.size)


def interpolation_matrix(x, knots) -> np.ndarray:
    """A with (A f)_i = linear interpolation at x_i of f given at ``knots`` (clamped at the ends)."""
    x = np.clip(np.asarray(x, float), knots[0], knots[-1])
    j = np.clip(np.searchsorted(knots, x, side="right") - 1, 0, knots.size - 2)
    frac = (x - knots[j]) / (knots[j + 1] - knots[j])
    a = np.zeros((x.size, knots.size))
    rows = np.arange(x.size)
    a[rows, j] = 1.0 - frac
    a[rows, j + 1] += frac
    return a


#: The last p/z table built: (what it was built from, the lab table, the table).
_last_table: tuple = (None, None, None)


def field_pz_table(inputs: FieldInputs, prepared: PreparedData) -> PzTable:
    """p/z against p for the field's own z source, up to 1.35 p_i (read-only, shared).

    The same z as the prepared points: the lab table or the correlation for the (well-stream)
    gas that prepare used. The history match and the forecast ask for the same table, so the
    last one is kept and returned while the z source, temperature, p_i and standard
    conditions are the same (equal values; the same lab table object)."""
    global _last_table
    fluid, ch = prepared.fluid or inputs.fluid, inputs.choices
    key = (
        fluid,
        ch.z_method,
        ch.use_lab_table,
        inputs.reservoir_temperature_degF,
        inputs.initial_pressure_psia,
        inputs.standard_conditions,
    )
    last_key, last_lab, last = _last_table
    if last is not None and last_lab is inputs.lab_table and last_key == key:
        return last
    z_of_p, _, _ = field_z_function(inputs, fluid, [])
    table = PzTable(
        z_of_p,
        inputs.reservoir_temperature_degF,
        1.35 * inputs.initial_pressure_psia,
        inputs.standard_conditions,
    )
    for value in (table.p, table.z, table.phi, table.dphi):  # shared: an in-place change would raise
        value.flags.writeable = False
    _last_table = (key, inputs.lab_table, table)
    return table


#: The last grid built, with the objects it was built from: a field's analysis asks for the
#: same grid once for the history match and once per fitted model stepped past the history.
_last_grid: tuple = (None, None, None, None)


def tank_grid(
    inputs: FieldInputs, prepared: PreparedData, *, bw_rb_per_stb: float = DEFAULT_BW_RB_PER_STB
) -> TankGrid:
    """Put a field's production and included surveys on a uniform grid.

    The inputs and prepared data are frozen, so a call with the very same objects as the
    last one returns the last grid (read-only: callers derive new grids with
    ``dataclasses.replace``)."""
    global _last_grid
    last_inputs, last_prepared, last_bw, last = _last_grid
    if last_inputs is inputs and last_prepared is prepared and last_bw == bw_rb_per_stb:
        return last
    grid = _build_tank_grid(inputs, prepared, bw_rb_per_stb)
    for value in vars(grid).values():  # shared: an in-place change would raise, not leak
        if isinstance(value, np.ndarray):
            value.flags.writeable = False
    _last_grid = (inputs, prepared, bw_rb_per_stb, grid)
    return grid


def _build_tank_grid(inputs: FieldInputs, prepared: PreparedData, bw_rb_per_stb: float) -> TankGrid:
    ends = np.asarray(prepared.production_end_t_days, float)
    if ends.size == 0:
        raise InsufficientDataError("no production: there is nothing to match")
    pts = [p for p in prepared.points if p.included]
    t0 = production_start_t_days(ends)
    obs_abs = np.array([p.t_days for p in pts], float)
    t_end = max(float(ends[-1]), float(obs_abs.max()) if obs_abs.size else 0.0) - t0
    periods = np.diff(np.concatenate([[t0], ends]))
    n = int(np.clip(np.ceil(t_end / np.median(periods) - 1e-9), MIN_STEPS, MAX_STEPS))
    t = t_end / n * np.arange(1, n + 1)
    gas_bscf = np.diff(np.concatenate([[0.0], prepared.cumulative_gas_at_end_bscf]))
    water = inputs.production_water_stb
    wp_grid = np.zeros(n)
    wp_obs = np.zeros(obs_abs.size)
    if produced_water_is_liquid(inputs):
        wp_grid = cumulative_at_times(t0 + t, ends, water) * bw_rb_per_stb
        wp_obs = cumulative_at_times(obs_abs, ends, water) * bw_rb_per_stb
    table = field_pz_table(inputs, prepared)
    obs_t = obs_abs - t0
    return TankGrid(
        t_start_days=t0,
        t_days=t,
        gp_scf=cumulative_at_times(t0 + t, ends, gas_bscf) * 1e9,
        wp_rb=wp_grid,
        obs_t_days=obs_t,
        obs_gp_scf=np.array([p.gp_bscf for p in pts], float) * 1e9,
        obs_wp_rb=wp_obs,
        obs_pz_psia=np.array([p.pz_psia for p in pts], float),
        obs_weight=np.array([p.weight for p in pts], float),
        obs_interp=interpolation_matrix(obs_t, np.concatenate([[0.0], t])),
        initial_pressure_psia=float(inputs.initial_pressure_psia),
        ce_per_psi=field_effective_compressibility_per_psi(inputs),
        t_degF=float(inputs.reservoir_temperature_degF),
        conditions=inputs.standard_conditions,
        table=table,
    )


@dataclass(frozen=True)
class InfluxModel:
    """How an aquifer's influx depends on the pressures: We = T(c) Δ(p_i, p).

    T(c) is the lower-triangular Toeplitz kernel with first column c (uniform grid).
    """

    drops: object  # callable (p_i, p) -> Δ
    bands: tuple[tuple[int, float], ...]  # ∂Δ_j/∂p_i = coef where j = i + offset


def dwe_dp_column(kernel_column: np.ndarray, bands) -> np.ndarray:
    """First column of ∂We/∂p = T(c) ∂Δ/∂p, itself lower Toeplitz: m_k = Σ coef c_{k − offset}."""
    m = np.zeros_like(kernel_column)
    for offset, coef in bands:
        m[offset:] += coef * kernel_column[: kernel_column.size - offset]
    return m


@dataclass
class TankState:
    """A solved pressure history."""

    p_psia: np.ndarray
    we_rb: np.ndarray
    dwe_dp_column: np.ndarray
    converged: bool


class TankSolver:
    """Solve the tank balance for given G, p_i and aquifer kernel; observe p/z at the surveys."""

    def __init__(self, grid: TankGrid, influx: InfluxModel):
        self.grid = grid
        self.influx = influx
        self.table = grid.table
        self._pz_initial = (None, None)  # (p_i, p_i/z_i): a fit asks for the same p_i many times
        # The interpolation onto the survey times, t_1..t_N columns, contiguous: a product with
        # the strided view costs more than the rest of observe().
        self._obs_steps = np.ascontiguousarray(grid.obs_interp[:, 1:])
        self._band_offsets = np.array([off for off, _ in influx.bands], dtype=np.int64)
        self._band_coefs = np.array([coef for _, coef in influx.bands], dtype=float)
        self._compiled_arrays = None  # the table and production as the compiled solve takes them

    def pz_initial(self, pi):
        """p_i/z_i [psia] (the table's value, remembered for the last p_i)."""
        last_pi, last = self._pz_initial
        if pi != last_pi:
            last = self.table.pz(pi)
            self._pz_initial = (pi, last)
        return last

    def gas_pore_volume_rb(self, g_scf, pi):
        return g_scf * self.table.bg_coef / self.pz_initial(pi)  # G B_gi, B_gi = coef z_i / p_i

    def influx_at(self, p, pi, kernel_column):
        return causal_convolution(kernel_column, self.influx.drops(pi, p))

    def residual(self, p, we, g_scf, pi):
        g = self.grid
        u = self.table.pz(p) / self.pz_initial(pi)
        d = 1.0 - g.ce_per_psi * (pi - p) - (we - g.wp_rb) / self.gas_pore_volume_rb(g_scf, pi)
        return u * d - (1.0 - g.gp_scf / g_scf)

    def jacobian_p(self, p, we, g_scf, pi, m_column):
        """∂R/∂p: lower triangular, diag(c) − diag(a) T(m) (:meth:`_balance_parts`)."""
        _, a, c = self._balance_parts(p, we, g_scf, pi)
        jac = lower_toeplitz(m_column)
        jac *= -a[:, None]
        jac.flat[:: jac.shape[0] + 1] += c  # the diagonal
        return jac

    def _balance_parts(self, p, we, g_scf, pi):
        """(R, a, c): the residual and ∂R/∂p = diag(c) − diag(a) T(m), with a = u/(G B_gi) > 0
        and T(m) = ∂We/∂p."""
        g, tab = self.grid, self.table
        pz_i = self.pz_initial(pi)
        gpv = self.gas_pore_volume_rb(g_scf, pi)
        u = tab.pz(p) / pz_i
        d = 1.0 - g.ce_per_psi * (pi - p) - (we - g.wp_rb) / gpv
        return u * d - (1.0 - g.gp_scf / g_scf), u / gpv, tab.dpz(p) / pz_i * d + u * g.ce_per_psi

    def solve(self, g_scf, pi, kernel_column, p_start=None) -> TankState:
        """Newton's method on the whole pressure history (the Jacobian is refreshed every step:
        with a strong aquifer a frozen one overshoots).

        Each step solves the row-scaled system (diag(c/a) − T(m)) δ = −R/a, whose matrix is
        −T(m) but for its diagonal: T(m) is built once, and a step costs one triangular solve.
        """
        g, tab = self.grid, self.table
        m = dwe_dp_column(kernel_column, self.influx.bands)
        if p_start is None:  # the volumetric history
            p_start = tab.p_of_pz(tab.pz(pi) * np.clip(1.0 - g.gp_scf / g_scf, 0.0, 1.0))
        if accel.enabled():
            return self._solve_compiled(g_scf, pi, kernel_column, m, p_start)
        p_lo, p_hi = float(tab.p[0]), float(tab.p[-1])
        p = np.clip(np.asarray(p_start, float), p_lo, p_hi)
        converged = False
        scaled = lower_toeplitz(-m)  # = −T(m), without a second n x n array
        diagonal = scaled.reshape(-1)[:: p.size + 1]  # a view: the diagonal, set at every step
        for _ in range(_NEWTON_MAX_ITER):
            we = self.influx_at(p, pi, kernel_column)
            r, a, c = self._balance_parts(p, we, g_scf, pi)
            with np.errstate(divide="ignore", invalid="ignore"):
                diagonal[:] = c / a - m[0]
                step = solve_lower(scaled, -r / a)
            if not np.isfinite(step).all():  # array methods: the hot loop of every fit
                break
            p_new = np.minimum(np.maximum(p + step, p_lo), p_hi)  # np.clip, without its wrapper
            done = np.abs(p_new - p).max() < _NEWTON_TOL_PSI
            p = p_new
            if done:
                converged = True
                break
        return TankState(p, self.influx_at(p, pi, kernel_column), m, converged)

    def _solve_compiled(self, g_scf, pi, kernel_column, m, p_start) -> TankState:
        """:meth:`solve` compiled (:mod:`.compiled`): the same method and stopping rule."""
        from .compiled import newton_history  # numba: imported only on this path

        tab_p, tab_phi, tab_dphi, wp_rb, gp_scf = self._arrays_for_compiled()
        p = np.array(p_start, dtype=float)  # a copy: the compiled solve works in place
        converged = newton_history(
            np.array(kernel_column, dtype=float), m, self._band_offsets, self._band_coefs, float(pi), tab_p,
            tab_phi, tab_dphi, float(self.grid.ce_per_psi), wp_rb, gp_scf, float(g_scf),
            float(self.gas_pore_volume_rb(g_scf, pi)), float(self.pz_initial(pi)), p, _NEWTON_TOL_PSI,
            _NEWTON_MAX_ITER,
        )  # fmt: skip
        return TankState(p, self.influx_at(p, pi, kernel_column), m, bool(converged))

    def linear_responses(self, state: TankState, g_scf, pi, perturbed):
        """(dp, We) of a solved history for each perturbed (G, p_i, kernel, fresh): to first
        order, dp = −(∂R/∂p)⁻¹ (R(p, We'; G', p_i') − R(p, We; G, p_i)) and We' + T(m) dp, with
        We' the influx at the same pressures (recomputed when ``fresh``, else the solved one).
        Arrays of shape (len(perturbed), steps); compiled when :mod:`..accel` is enabled."""
        p, we0, m = state.p_psia, state.we_rb, state.dwe_dp_column
        if accel.enabled():
            from .compiled import linear_responses  # numba: imported only on this path

            tab_p, tab_phi, tab_dphi, wp_rb, gp_scf = self._arrays_for_compiled()
            rows = [(g_scf, pi, None, False), *perturbed]
            kernels = np.zeros((len(rows), p.size))
            for j, (_, _, kernel, _) in enumerate(rows[1:], start=1):
                kernels[j] = kernel
            gs = np.array([float(r[0]) for r in rows])
            pis = np.array([float(r[1]) for r in rows])
            pz_is = np.array([float(self.pz_initial(v)) for v in pis])
            gpvs = np.array([float(self.gas_pore_volume_rb(g, v)) for g, v in zip(gs, pis, strict=True)])
            return linear_responses(
                kernels, np.array([r[3] for r in rows]), gs, pis, pz_is, gpvs, np.array(p, dtype=float),
                np.array(we0, dtype=float), m, self._band_offsets, self._band_coefs, tab_p, tab_phi, tab_dphi,
                float(self.grid.ce_per_psi), wp_rb, gp_scf,
            )  # fmt: skip
        r0 = self.residual(p, we0, g_scf, pi)
        jac_p = self.jacobian_p(p, we0, g_scf, pi, m)
        dps, wes = np.empty((len(perturbed), p.size)), np.empty((len(perturbed), p.size))
        for j, (g, pi_j, kernel, fresh) in enumerate(perturbed):
            we = self.influx_at(p, pi_j, kernel) if fresh else we0
            dps[j] = -solve_lower(jac_p, self.residual(p, we, g, pi_j) - r0)
            wes[j] = we + causal_convolution(m, dps[j])
        return dps, wes

    def _arrays_for_compiled(self):
        """The table and production as writable copies (one compiled signature for all calls),
        made on the first compiled call."""
        if self._compiled_arrays is None:
            g, tab = self.grid, self.table
            self._compiled_arrays = tuple(
                np.array(a, dtype=float) for a in (tab.p, tab.phi, tab.dphi, g.wp_rb, g.gp_scf)
            )
        return self._compiled_arrays

    def observe(self, we, g_scf, pi, p_grid):
        """Model p/z at the survey times [psia]."""
        g, tab = self.grid, self.table
        we_obs = self._obs_steps @ we  # We(t_0) = 0
        pz_i = self.pz_initial(pi)
        x = (we_obs - g.obs_wp_rb) / self.gas_pore_volume_rb(g_scf, pi)
        n = 1.0 - g.obs_gp_scf / g_scf
        if g.ce_per_psi == 0.0:
            return pz_i * n / (1.0 - x)
        p = g.obs_interp[:, 0] * pi + self._obs_steps @ p_grid
        p_lo, p_hi = float(tab.p[0]), float(tab.p[-1])
        for _ in range(6):  # Newton on each survey's own balance
            u = tab.pz(p) / pz_i
            d = 1.0 - g.ce_per_psi * (pi - p) - x
            f = u * d - n
            df = tab.dpz(p) / pz_i * d + u * g.ce_per_psi
            p = np.minimum(np.maximum(p - f / df, p_lo), p_hi)
        return tab.pz(p)
