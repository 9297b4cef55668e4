"""Record the history match's solver runs, or swap in scipy's trust-region reflective solver as
the independent reference (``scipy.optimize.least_squares``, method "trf"), for the tests."""

from scipy.optimize import least_squares

from server.engine.aquifer import history_match as hm


def scipy_trf(fun, jac, x0, bounds, *, ftol, xtol, gtol, max_nfev, callback=None):
    """The same problem solved by scipy's least_squares (trf, x_scale="jac"), as before issue 17."""

    def stop(intermediate_result):
        callback(intermediate_result.x, intermediate_result.fun)

    return least_squares(
        fun, x0, jac=jac, bounds=bounds, method="trf", x_scale="jac", ftol=ftol, xtol=xtol, gtol=gtol,
        max_nfev=max_nfev, callback=stop if callback is not None else None,
    )  # fmt: skip


def record(monkeypatch, runs: list, *, reference=False, **override):
    """Patch the history match's solver so each run is appended to ``runs``; ``override`` replaces
    its keyword arguments; ``reference`` solves with :func:`scipy_trf` instead."""
    solver = scipy_trf if reference else hm.bounded_least_squares

    def recording(*args, **kw):
        kw.update(override)
        runs.append(solver(*args, **kw))
        return runs[-1]

    monkeypatch.setattr(hm, "bounded_least_squares", recording)
