"""A field whose straight p/z line through every well is refused, while one well reads near the
initial pressure and the others deplete: the line mixes two compartments (its decline lies
within the scatter of the two groups), yet the wells that deplete together still define the
volume connected to the producers. The automatic rule (rules.py: compartment signature and a
determined connected tank) then names that connected tank as the basis, as it does when the
line is not refused."""

from __future__ import annotations

import dataclasses

from ..diagnosis.diagnose import Diagnosis
from ..diagnosis.flag_rules import raise_flags
from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from .build import basis_evidence, choose_basis, model_outcomes
from .types import Basis, ModelOutcome


def headline_without_line(
    inputs: FieldInputs, screened: PreparedData, diag: Diagnosis
) -> tuple[Basis, tuple[ModelOutcome, ...], Diagnosis] | None:
    """(basis, every model's outcome, the diagnosis with its flags raised against the basis) for
    a field whose p/z estimate was refused; None unless the diagnosis found another compartment
    and a model other than the refused straight line can carry the headline."""
    if not any(f.code == "compartment_signature" for f in diag.flags):
        return None
    outcomes = model_outcomes(inputs, screened, diag, line=None, corrected=None)
    basis = choose_basis(inputs, screened, diag, outcomes, diag.flags, line_scatter_sigma=None)
    if basis is None or basis.model == "single_tank":
        return None
    evidence = basis_evidence(inputs, screened, diag, basis)
    flags = raise_flags(evidence, inputs.flag_thresholds)
    return basis, outcomes, dataclasses.replace(diag, evidence=evidence, flags=flags)
