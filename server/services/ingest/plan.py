"""What committing an upload would do (the dry run's result), and the shared checks
that build it: matching names to stored rows, repeated keys, existing values."""

from __future__ import annotations

import datetime as dt
import hashlib
from collections import Counter
from dataclasses import dataclass, field

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Field, Well
from .parse import ReadOptions
from .report import ValidationReport
from .rowchecks import check_repeated_keys  # noqa: F401 - its home before issue 17

PREVIEW_CHANGES = 50


@dataclass(slots=True)
class Change:
    """One row to insert, or one stored row to replace (``current`` set)."""

    entity: str
    row: int
    label: str
    values: dict
    field_name: str
    current: object | None = None
    before: dict | None = None


@dataclass
class UploadPlan:
    """Built by :func:`services.ingest.service.check_upload`; nothing is written."""

    kind: str
    filename: str
    sha256: str
    size_bytes: int
    report: ValidationReport
    options: ReadOptions = field(default_factory=ReadOptions)
    inserts: list[Change] = field(default_factory=list)
    replacements: list[Change] = field(default_factory=list)
    unchanged: int = 0
    field_ids: set[int] = field(default_factory=set)
    extra: dict = field(default_factory=dict)  # kind-specific data for the writer
    asset_ids: frozenset[int] | None = None  # the uploader's assets (None: every asset)
    _digest: str | None = field(default=None, repr=False)

    @property
    def changes_anything(self) -> bool:
        return bool(self.inserts or self.replacements)

    def digest(self) -> str:
        """Fingerprint of what committing would do: the file and its reading, which rows are
        added, which stored values are replaced (with their current values), and the warnings.
        A confirmed preview is committed only if the plan still has the same digest."""
        if self._digest is None:
            h = hashlib.sha256()
            h.update(repr((self.sha256, self.kind, sorted(self.options.as_dict().items()))).encode())
            h.update(repr([c.row for c in self.inserts]).encode())
            h.update(repr([(c.row, c.before) for c in self.replacements]).encode())
            h.update(repr([(p.row, p.column, p.message) for p in self.report.warnings]).encode())
            self._digest = h.hexdigest()
        return self._digest

    def preview(self) -> dict:
        per_field: Counter = Counter()
        for c in self.inserts + self.replacements:
            per_field[c.field_name] += 1
        sample = [
            {"action": "add", "row": c.row, "what": c.label, "before": None, "after": _plain_dict(c.values)}
            for c in self.inserts[:PREVIEW_CHANGES]
        ]
        sample += [
            {
                "action": "replace",
                "row": c.row,
                "what": c.label,
                "before": c.before,
                "after": _plain_dict(c.values),
            }
            for c in self.replacements[:PREVIEW_CHANGES]
        ]
        return {
            "kind": self.kind,
            "filename": self.filename,
            "rows_total": self.report.rows_total,
            "to_insert": len(self.inserts),
            "to_replace": len(self.replacements),
            "unchanged": self.unchanged,
            "fields": sorted(self.field_ids),
            "per_field": [{"field": k, "changes": v} for k, v in sorted(per_field.items())],
            "changes": sample,
            "changes_not_shown": max(0, len(self.inserts) - PREVIEW_CHANGES)
            + max(0, len(self.replacements) - PREVIEW_CHANGES),
            "digest": self.digest(),
        }


def plain(v):
    if isinstance(v, dt.date):
        return v.isoformat()
    if isinstance(v, float):
        return round(v, 6)
    return v


def _plain_dict(d: dict) -> dict:
    """Values as the preview shows them (internal ids are in the label already, as names)."""
    return {k: plain(v) for k, v in d.items() if not k.startswith("_") and k not in ("well_id", "field_id")}


def same(a, b) -> bool:
    """Equal for storage purposes: floats to 1e-9 relative (a re-upload is 'unchanged')."""
    if a is None or b is None:
        return a is None and b is None
    if isinstance(a, float | int) and isinstance(b, float | int) and not isinstance(a, bool):
        return abs(float(a) - float(b)) <= 1e-9 * max(1.0, abs(float(a)))
    return a == b


def place(
    plan: UploadPlan, change: Change, current, compare: tuple[str, ...], replace: bool, what: str
) -> None:
    """Insert, leave unchanged, replace (when chosen) or report a conflicting value."""
    if current is None:
        plan.inserts.append(change)
        return
    if all(same(getattr(current, c), change.values[c]) for c in compare):
        plan.unchanged += 1
        return
    before = {c: plain(getattr(current, c)) for c in compare}
    if not replace:
        differs = ", ".join(
            f"{c} {plain(getattr(current, c))} → {plain(change.values[c])}"
            for c in compare
            if not same(getattr(current, c), change.values[c])
        )
        plan.report.add(
            change.row,
            None,
            None,
            f"{what} is already stored with other values ({differs}); "
            "choose 'replace existing' to correct it",
        )
        return
    change.current, change.before = current, before
    plan.replacements.append(change)


class Names:
    """Stored fields and wells by name: exact spelling first, then ignoring case."""

    def __init__(
        self,
        session: Session,
        field_names: set[str],
        report: ValidationReport,
        asset_ids: frozenset[int] | None = None,
    ):
        """``asset_ids`` (None: all) limits the fields a file may name to a user's assets."""
        self.report = report
        self.asset_ids = asset_ids
        folded = {n.casefold() for n in field_names}
        self.fields: dict[str, list[Field]] = {}
        self.hidden: set[str] = set()  # names of fields outside the user's assets
        for f in session.execute(select(Field)).scalars():
            if f.name.casefold() in folded:
                if asset_ids is not None and f.asset_id not in asset_ids:
                    self.hidden.add(f.name.casefold())
                    continue
                self.fields.setdefault(f.name.casefold(), []).append(f)
        ids = [f.id for fs in self.fields.values() for f in fs]
        self.wells: dict[tuple[int, str], list[Well]] = {}
        if ids:
            for w in session.execute(select(Well).where(Well.field_id.in_(ids))).scalars():
                self.wells.setdefault((w.field_id, w.name.casefold()), []).append(w)
        self._noted: set[tuple[str, str]] = set()

    def field(self, name: str, row: int, *, required: bool = True) -> Field | None:
        found = self.fields.get(name.casefold(), [])
        exact = [f for f in found if f.name == name]
        if exact:
            return exact[0]
        if len(found) == 1:
            self._note("field", name, found[0].name)
            return found[0]
        if len(found) > 1:
            self.report.add(row, "field", name, "matches several stored fields that differ only in case")
        elif required:
            scope = "" if self.asset_ids is None else " (or not in your assets)"
            self.report.add(row, "field", name, f"unknown field{scope}; add it with a fields file first")
        return None

    def well(self, f: Field, name: str, row: int) -> Well | None:
        found = self.wells.get((f.id, name.casefold()), [])
        exact = [w for w in found if w.name == name]
        if exact:
            return exact[0]
        if len(found) == 1:
            self._note("well", name, found[0].name)
            return found[0]
        self.report.add(
            row, "well", name, f"unknown well in field {f.name!r}; add it with a wells file first"
        )
        return None

    def _note(self, what: str, written: str, stored: str) -> None:
        if (written, stored) not in self._noted:
            self._noted.add((written, stored))
            self.report.note(f"{what} {written!r} was matched to the stored {what} {stored!r} (case ignored)")
