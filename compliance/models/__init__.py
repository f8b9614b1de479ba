"""The compliance app's models, one module per concern; every model is importable from here."""

from compliance.models.anchor_log import AnchorLogEntry
from compliance.models.due import CalendarFeed, Notice, NoticeEmail
from compliance.models.jobs import (
    OPEN_STATES,
    Drop,
    DropLog,
    Hold,
    HoldClearance,
    Job,
    JobState,
    JobTransition,
    SyncReceipt,
)
from compliance.models.people import Organisation, Role, User
from compliance.models.profiles import JurisdictionProfile, ProfileRevision
from compliance.models.records import (
    DailyRecord,
    ExportMade,
    PageCheck,
    RecordChainHead,
    RecordPdf,
    SigningCredential,
)
from compliance.models.registers import (
    Anchor,
    AnchorCertification,
    Equipment,
    RegisterChange,
    Site,
    SiteGrant,
    SiteGrantEnd,
)

__all__ = [
    "OPEN_STATES",
    "Anchor",
    "AnchorCertification",
    "AnchorLogEntry",
    "CalendarFeed",
    "DailyRecord",
    "Drop",
    "DropLog",
    "Equipment",
    "ExportMade",
    "Hold",
    "HoldClearance",
    "Job",
    "JobState",
    "JobTransition",
    "JurisdictionProfile",
    "Notice",
    "NoticeEmail",
    "Organisation",
    "PageCheck",
    "ProfileRevision",
    "RecordChainHead",
    "RecordPdf",
    "RegisterChange",
    "Role",
    "SigningCredential",
    "Site",
    "SiteGrant",
    "SiteGrantEnd",
    "SyncReceipt",
    "User",
]
