"""All ORM models; importing this module registers every table on Base.metadata."""

from .accounts import ApiToken, AuditEvent, AuthSession, LoginAttempt, User, UserAsset
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
from .settings import TeamSetting
from .staging import StagedUpload

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
    "LoginAttempt",
    "PressureSurvey",
    "ProductionMonth",
    "StagedUpload",
    "TeamSetting",
    "Upload",
    "User",
    "UserAsset",
    "VolumetricEstimate",
    "Well",
]
