"""All ORM models; importing this module registers every table on Base.metadata."""

from .accounts import ApiToken, AuditEvent, AuthSession, User
from .portfolio import (
    Asset,
    Field,
    FieldAnalysisSettings,
    FieldNote,
    Fluid,
    FluidLabPoint,
    PressureSurvey,
    ProductionMonth,
    VolumetricEstimate,
    Well,
)
from .results import Estimate, Job, Upload

__all__ = [
    "ApiToken",
    "Asset",
    "AuditEvent",
    "AuthSession",
    "Estimate",
    "Field",
    "FieldAnalysisSettings",
    "FieldNote",
    "Fluid",
    "FluidLabPoint",
    "Job",
    "PressureSurvey",
    "ProductionMonth",
    "Upload",
    "User",
    "VolumetricEstimate",
    "Well",
]
