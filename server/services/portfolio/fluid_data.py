"""Read model of a field's fluid page: the gas description, its lab table, and z and Bg
against pressure from the same z function the estimate uses (``engine.prepare``)."""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
from sqlalchemy.orm import Session

from ...db.models import Field
from ...engine.errors import EngineError
from ...engine.prepare.points import field_z_function, prepare
from ...engine.pvt.gas import Z_METHOD_LABELS, bg_rcf_per_scf, z_factor
from ...engine.pvt.labtable import z_from_bg
from ...engine.units import STANDARD_ATMOSPHERE_PSIA
from ..jobs.recompute import FieldNotReadyError, load_field_inputs

#: The curves start at one standard atmosphere (the lowest pressure a page needs).
CURVE_LOW_PSIA = STANDARD_ATMOSPHERE_PSIA
_NICE_STEPS_PSI = (5, 10, 20, 25, 50, 100, 200, 250, 500, 1000)


@dataclass(frozen=True)
class LabPointRow:
    pressure_psia: float
    z_factor: float | None  # as measured (None when the table gives Bg)
    bg_rcf_per_scf: float | None  # as measured, at the storage basis
    z_from_lab: float  # the lab's z, or z from its Bg
    bg_from_lab_rcf_per_scf: float  # the lab's Bg, or Bg from its z
    correlation_z_factor: float | None  # the correlation at this pressure (None if out of its range)

    @property
    def difference_frac(self) -> float | None:
        """(lab z - correlation z) / correlation z."""
        c = self.correlation_z_factor
        return None if c is None else self.z_from_lab / c - 1.0


@dataclass(frozen=True)
class FluidCurve:
    """z and Bg (at the storage basis) on a grid from one atmosphere to the initial pressure."""

    pressure_psia: tuple[float, ...]
    z_correlation: tuple[float, ...]
    bg_correlation_rcf_per_scf: tuple[float, ...]
    z_used: tuple[float, ...] | None  # the estimate's z where it is not the correlation (lab table)
    bg_used_rcf_per_scf: tuple[float, ...] | None
    correlation_label: str


@dataclass(frozen=True)
class FluidView:
    gas_gravity: float | None  # separator gas, as stored (None when only the well stream's is known)
    y_co2_frac: float
    y_h2s_frac: float
    y_n2_frac: float
    condensate_api: float | None
    z_gas_gravity: float  # the gravity z is computed for (well stream when condensate is corrected)
    z_method: str
    z_method_label: str
    pseudo_critical_method: str
    z_source: str  # the estimate's z source in words
    uses_lab_table: bool
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    standard_conditions: str  # the basis of every Bg here
    lab_points: list[LabPointRow]
    curve: FluidCurve | None
    selected: list[tuple[str, float, float, float]]  # (what, p_psia, z, bg) at initial and abandonment
    notes: list[str]
    wellstream_gravity: float | None = None  # as stored: the reservoir gas gravity, when given
    # which gravity z uses: "separator", "recombined" (from separator gas and condensate) or "given"
    z_gravity_source: str = "separator"
    gravity_warnings: tuple[str, ...] = ()  # gravities to check (engine/pvt/wellstream.py)


def pressure_grid_psia(initial_pressure_psia: float) -> np.ndarray:
    """One atmosphere, round pressures (about 100 steps), and the initial pressure."""
    target = initial_pressure_psia / 100.0
    step = next((s for s in _NICE_STEPS_PSI if s >= target), _NICE_STEPS_PSI[-1])
    inner = np.arange(step, initial_pressure_psia, step, dtype=float)
    inner = inner[inner > CURVE_LOW_PSIA]
    return np.concatenate([[CURVE_LOW_PSIA], inner, [initial_pressure_psia]])


def _finite_or_none(x) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def fluid_view(session: Session, field_id: int) -> FluidView | None:
    """None when the field has no fluid description (a field without one cannot be analysed)."""
    field = session.get(Field, field_id)
    if field is None or field.fluid is None:
        return None
    try:
        inputs = load_field_inputs(session, field)
    except FieldNotReadyError:
        return None
    notes: list[str] = []
    source, warnings = "separator", ()
    try:
        prepared = prepare(inputs)
        fluid = prepared.fluid or inputs.fluid
        source, warnings = prepared.gravity_source, prepared.fluid_warnings
    except EngineError as exc:  # bad stored data: the stored gravity as it is, and say why
        fluid = inputs.fluid
        if inputs.wellstream_gravity is not None:
            fluid = dataclasses.replace(fluid, gas_gravity=inputs.wellstream_gravity)
            source = "given"
        notes.append(
            f"the stored surveys or production could not be prepared ({exc}); z uses the "
            + ("well-stream gravity as given" if source == "given" else "separator gas")
        )
    ch, t, basis = inputs.choices, inputs.reservoir_temperature_degF, inputs.standard_conditions
    zf, z_source, table = field_z_function(inputs, fluid, notes)
    pi, pa = inputs.initial_pressure_psia, inputs.abandonment_pressure_psia

    def correlation(p):
        return np.asarray(z_factor(p, t, fluid, ch.z_method), float)

    curve = None
    selected = []
    try:
        p = pressure_grid_psia(pi)
        zc = correlation(p)
        used = np.asarray(zf(p), float) if table is not None else None
        curve = FluidCurve(
            tuple(p.tolist()),
            tuple(zc.tolist()),
            tuple(np.asarray(bg_rcf_per_scf(p, t, zc, basis)).tolist()),
            None if used is None else tuple(used.tolist()),
            None if used is None else tuple(np.asarray(bg_rcf_per_scf(p, t, used, basis)).tolist()),
            z_source if table is None else f"{Z_METHOD_LABELS[ch.z_method]} correlation",
        )
        for what, pp in (("initial", pi), ("abandonment", pa)):
            z = float(zf(pp))
            selected.append((what, pp, z, float(bg_rcf_per_scf(pp, t, z, basis))))
    except EngineError as exc:
        notes.append(f"no z curve: {exc}")
    lab = []
    for pt in field.fluid.lab_points:
        z_lab = (
            pt.z_factor
            if pt.z_factor is not None
            else float(z_from_bg(pt.bg_rcf_per_scf, pt.pressure_psia, t, basis))
        )
        bg_lab = (
            pt.bg_rcf_per_scf
            if pt.bg_rcf_per_scf is not None
            else float(bg_rcf_per_scf(pt.pressure_psia, t, z_lab, basis))
        )
        try:
            zc_pt = _finite_or_none(correlation(pt.pressure_psia))
        except EngineError:
            zc_pt = None
        lab.append(LabPointRow(pt.pressure_psia, pt.z_factor, pt.bg_rcf_per_scf, z_lab, bg_lab, zc_pt))
    fl = field.fluid
    return FluidView(
        gas_gravity=fl.gas_gravity,
        y_co2_frac=fl.y_co2_frac,
        y_h2s_frac=fl.y_h2s_frac,
        y_n2_frac=fl.y_n2_frac,
        condensate_api=fl.condensate_api,
        z_gas_gravity=float(fluid.gas_gravity),
        z_method=ch.z_method,
        z_method_label=Z_METHOD_LABELS[ch.z_method],
        pseudo_critical_method=fluid.pseudo_critical_method,
        z_source=z_source,
        uses_lab_table=table is not None,
        reservoir_temperature_degF=t,
        initial_pressure_psia=pi,
        abandonment_pressure_psia=pa,
        standard_conditions=basis.label,
        lab_points=lab,
        curve=curve,
        selected=selected,
        notes=notes,
        wellstream_gravity=fl.wellstream_gravity,
        z_gravity_source=source,
        gravity_warnings=tuple(warnings),
    )
