"""What a field has produced to date, and which gas a "produced" number is.

Production is stored as measured: separator (sales) gas, condensate and water per well and
month. The estimate counts cumulative gas as the engine prepared it: the separator gas, plus
the condensate's gas equivalent when the field's choices add it (and the water's, when water is
counted as condensed vapour), which is the wet-gas equivalent. Both are "Bscf", so every page
says which one it shows (issue 16).
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.models import FieldAnalysisSettings, Fluid, ProductionMonth, Well

SEPARATOR_GAS = "separator gas"
WET_GAS = "wet-gas equivalent"
_SAME = 1e-9  # relative: a counted total this close to the separator gas added nothing


@dataclass(frozen=True)
class ProducedToDate:
    separator_gas_bscf: float
    condensate_stb: float
    water_stb: float
    counted_bscf: float | None  # cumulative gas as the current estimate counts it

    @property
    def basis(self) -> str:
        """Which gas ``counted_bscf`` is: the wet-gas equivalent when it counts more than the
        separator gas (condensate or vapour added as gas), else separator gas."""
        if self.counted_bscf is not None and self.counted_bscf > self.separator_gas_bscf * (1 + _SAME):
            return WET_GAS
        return SEPARATOR_GAS

    @property
    def wet(self) -> bool:
        return self.basis == WET_GAS


def may_count_wet_gas(session: Session, field_ids) -> set[int]:
    """Fields whose choices add a gas equivalent (condensate with an API gravity and the
    condensate correction on, or water counted as vapour): the only ones whose estimate can
    count more than separator gas. Two small tables, no production rows."""
    rows = session.execute(
        select(
            Fluid.field_id,
            Fluid.condensate_api,
            FieldAnalysisSettings.condensate_correction,
            FieldAnalysisSettings.options,
        )
        .join(FieldAnalysisSettings, FieldAnalysisSettings.field_id == Fluid.field_id)
        .where(Fluid.field_id.in_(list(field_ids)))
    )
    return {
        fid
        for fid, api, condensate, options in rows
        if (condensate and api is not None) or (options or {}).get("water_vapour_correction")
    }


def produced_to_date(
    session: Session, counted: dict[int, float | None], *, wet_candidates_only: bool = False
) -> dict[int, ProducedToDate]:
    """Per field of ``counted`` (field id -> the estimate's cumulative gas, or None): the
    separator gas, condensate and water produced. ``wet_candidates_only`` sums production only
    for fields that may count wet gas (the portfolio page, which must stay fast); the others get
    their counted gas as separator gas, which is what it is for them."""
    ids = list(counted)
    summed = may_count_wet_gas(session, ids) if wet_candidates_only else set(ids)
    out = {
        fid: ProducedToDate(value or 0.0, 0.0, 0.0, value) if fid not in summed else None
        for fid, value in counted.items()
    }
    if summed:
        rows = session.execute(
            select(
                Well.field_id,
                func.sum(ProductionMonth.gas_mscf),
                func.sum(ProductionMonth.condensate_stb),
                func.sum(ProductionMonth.water_stb),
            )
            .join(Well, Well.id == ProductionMonth.well_id)
            .where(Well.field_id.in_(sorted(summed)))
            .group_by(Well.field_id)
        )
        for fid, gas, cond, water in rows:
            out[fid] = ProducedToDate(
                float(gas or 0) / 1e6, float(cond or 0), float(water or 0), counted[fid]
            )
    none = {fid: ProducedToDate(0.0, 0.0, 0.0, counted[fid]) for fid, p in out.items() if p is None}
    return out | none  # a field without production months
