"""All ORM models; importing this module registers every table on Base.metadata."""

from .accounts import ApiToken, AuditEvent, AuthSession, LoginAttempt, User, UserAsset
from .forecast import FieldPlan, PlannedWell, WellTest
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
from .reserves import Booking, ReconciliationLine, ReservesReview, ReviewField
from .results import Estimate, Job, RecomputeFailure, Upload
from .settings import TeamSetting
from .staging import StagedUpload

__all__ = [
    "ApiToken",
    "Asset",
    "AuditEvent",
    "AuthSession",
    "Booking",
    "Estimate",
    "Field",
    "FieldAnalysisSettings",
    "FieldNote",
    "FieldPlan",
    "Fluid",
    "FluidLabPoint",
    "Job",
    "LoginAttempt",
    "PlannedWell",
    "PressureSurvey",
    "RecomputeFailure",
    "ReconciliationLine",
    "ReservesReview",
    "ReviewField",
    "ProductionMonth",
    "StagedUpload",
    "TeamSetting",
    "Upload",
    "User",
    "UserAsset",
    "VolumetricEstimate",
    "Well",
    "WellTest",
]
