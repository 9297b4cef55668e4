"""The compiled tank solve (server/engine/aquifer/compiled.py, used when server.engine.accel is
enabled) against the numpy solve (the default, and the reference) and the influx models of
influx.py, on the demo's fields for the three aquifer models and strengths from none to strong;
and the same history match either way."""

import numpy as np
import pytest

from server.engine import accel
from server.engine.aquifer.compiled import influx_rb
from server.engine.aquifer.influx import causal_convolution
from server.engine.aquifer.models import SPECS, KernelCache
from server.engine.aquifer.tank_solver import TankSolver, tank_grid
from server.engine.prepare.points import prepare
from tests.engine.cases import demo_field_inputs


@pytest.fixture(autouse=True)
def numpy_path_after_each_test():
    yield
    accel.disable()  # a failed test must not leave the compiled path on for the next


@pytest.fixture(scope="module", params=["Cindervale", "Fallowmere", "Gorsewick"])
def field(request):
    inputs = demo_field_inputs(request.param)
    prepared = prepare(inputs)
    return inputs, prepared


@pytest.fixture
def grid(field):
    return tank_grid(*field)


def _kernels(grid, spec):
    red = 5.0 if spec.name == "aquifer_veh_radial" else None
    kc = KernelCache(spec, float(grid.t_days[0]), grid.n_steps, red)
    for strength in (0.0, 3e3, 3e4, 3e5):
        for rate in (1e-4, 1e-2) if spec.has_rate else (None,):
            yield strength * kc.unit(rate)


@pytest.mark.parametrize("model", sorted(SPECS))
def test_influx_of_the_model_bands_is_the_model_s_own_influx(grid, model):
    spec = SPECS[model]
    solver = TankSolver(grid, spec.influx)
    p = np.linspace(grid.initial_pressure_psia * 0.95, grid.initial_pressure_psia * 0.4, grid.n_steps)
    for kernel in _kernels(grid, spec):
        expected = causal_convolution(kernel, spec.influx.drops(grid.initial_pressure_psia, p))
        got = influx_rb(kernel, solver._band_offsets, solver._band_coefs, grid.initial_pressure_psia, p)
        assert np.allclose(got, expected, rtol=1e-12, atol=1e-9 * max(1.0, np.abs(expected).max()))


def _both(solve, *args):
    """(compiled, numpy) results of the same call."""
    assert accel.enable()
    try:
        fast = solve(*args)
    finally:
        accel.disable()
    return fast, solve(*args)


@pytest.mark.parametrize("model", sorted(SPECS))
def test_compiled_solve_is_the_numpy_solve(grid, model):
    spec = SPECS[model]
    solver = TankSolver(grid, spec.influx)
    pi = grid.initial_pressure_psia
    for g_scf in (grid.gp_scf[-1] * 1.3, grid.gp_scf[-1] * 3.0):
        for kernel in _kernels(grid, spec):
            cold, cold_ref = _both(solver.solve, g_scf, pi, kernel)
            assert cold.converged == cold_ref.converged
            assert np.max(np.abs(cold.p_psia - cold_ref.p_psia)) < 1e-6  # Newton's tolerance 1e-7 psi
            assert np.allclose(cold.we_rb, cold_ref.we_rb, rtol=1e-9, atol=1e-6)
            start = cold_ref.p_psia + 3.0  # a warm start, as the fit's tangent prediction gives
            warm, warm_ref = _both(solver.solve, g_scf, pi, kernel, start)
            assert warm.converged == warm_ref.converged
            assert np.max(np.abs(warm.p_psia - warm_ref.p_psia)) < 1e-6
            assert np.array_equal(start, cold_ref.p_psia + 3.0)  # the caller's start is not changed


def test_the_accelerator_is_off_unless_a_process_enables_it():
    assert not accel.enabled()


@pytest.mark.parametrize("model", sorted(SPECS))
def test_the_history_match_is_the_same_compiled_or_not(field, model):
    from server.engine.aquifer.history_match import fit_aquifer_model

    fast, plain = _both(fit_aquifer_model, *field, model)
    assert fast.giip_bscf == pytest.approx(plain.giip_bscf, rel=1e-6)
    assert fast.rss_psia2 == pytest.approx(plain.rss_psia2, rel=1e-6)
    assert (fast.identifiable, fast.converged) == (plain.identifiable, plain.converged)


@pytest.mark.parametrize("model", sorted(SPECS))
def test_compiled_jacobian_is_the_numpy_jacobian(field, model):
    # The history match's Jacobian (linear responses of the solved history to each parameter,
    # tank_solver.TankSolver.linear_responses) compiled and in numpy, at the fit's start.
    from server.engine.aquifer import history_match as hm

    inputs, prepared = field
    grid = tank_grid(inputs, prepared)
    spec = SPECS[model]
    reds = hm.VEH_RED_GRID if model == "aquifer_veh_radial" else (None,)
    x0, bounds, fit_pi, s_ref, red = hm._start_and_bounds(inputs, grid, spec, reds)

    def jacobian():
        problem = hm._Problem(grid, spec, red, fit_pi, s_ref, along_valley=True)
        theta, _ = problem.from_plain(x0, bounds)
        return problem.jacobian(theta), problem.influx_frac_gradient, problem._tangent[2]

    fast, plain = _both(jacobian)
    for a, b in zip(fast, plain, strict=True):
        # forward differences of step 1e-7: rounding of the two solves shows at about 1e-8 of a column
        assert np.max(np.abs(a - b)) <= 1e-6 * np.abs(b).max(), np.max(np.abs(a - b)) / np.abs(b).max()


@pytest.mark.parametrize("red", [None, 10.0, 5.0, 3.0, 2.0])
def test_compiled_veh_kernel_column_is_the_table_s_own(red):
    # W_D(t_D k Δt) from the shipped tables (dimensionless.DimensionlessTable: cubic Hermite in
    # ln t_D, slope ½ below, the plateau above a bounded table), compiled and in numpy, from
    # t_D steps far below the table to columns that reach a bounded aquifer's plateau.
    spec = SPECS["aquifer_veh_radial"]
    for rate in (1e-9, 1e-5, 1e-3, 0.1, 3.0):
        fast, plain = _both(lambda r=rate: KernelCache(spec, 30.4, 240, red).unit(r))
        assert np.allclose(fast, plain, rtol=1e-13, atol=0.0)
    if red is None:  # past the infinite aquifer's table: the numpy path raises, as before
        from server.engine.errors import InputRangeError

        with pytest.raises(InputRangeError):
            _both(lambda: KernelCache(spec, 30.4, 240, None).unit(1e9))


def test_a_process_that_cannot_compile_keeps_the_numpy_path(monkeypatch):
    # tankbook worker / serve / recompute switch the kernels on through cli._compiled_engine; a
    # failure to compile or cache them (numba missing, no writable cache) must leave the numpy
    # path on, not stop the process.
    from server import cli
    from server.engine import warm as warm_module

    def broken():
        accel.enable()
        raise RuntimeError("cannot cache function: no locator available")

    monkeypatch.setattr(warm_module, "warm", broken)
    assert cli._compiled_engine() is False
    assert not accel.enabled()
    monkeypatch.undo()
    assert cli._compiled_engine() is True and accel.enabled()
