"""Filtering a review's field rows (the review page) and what stops each field's booking from
being submitted. Plain functions over :class:`views.FieldBooking`; the web layer turns
:class:`FilterError` into a 422 naming the query parameter."""

from __future__ import annotations

from dataclasses import dataclass

SHOW_CHOICES = {
    "": "every field",
    "justification_missing": "a justification is required and not written",
    "flags": "the frozen estimate carries a flag",
    "newer": "a newer estimate exists",
    "blocked": "the booking blocks submission",
}
CLASS_CHOICES = ("", "reserves", "contingent")


class FilterError(ValueError):
    """A filter value that is not one of the choices; ``param`` names the query parameter."""

    def __init__(self, param: str, message: str):
        super().__init__(f"{param}: {message}")
        self.param = param


@dataclass(frozen=True)
class FieldFilters:
    asset: str = ""  # an asset's name; "" for every asset
    resource_class: str = ""
    show: str = ""

    @property
    def active(self) -> bool:
        return bool(self.asset or self.resource_class or self.show)


def parse_filters(asset: str, resource_class: str, show: str, asset_names) -> FieldFilters:
    """Check the query values against the choices (the assets are the review's own)."""
    names = sorted(set(asset_names))
    if asset and asset not in names:
        raise FilterError("asset", f"not an asset of this review; choose one of {', '.join(names) or 'none'}")
    if resource_class not in CLASS_CHOICES:
        raise FilterError("resource_class", "choose reserves or contingent")
    if show not in SHOW_CHOICES:
        raise FilterError("show", f"choose one of {', '.join(k for k in SHOW_CHOICES if k)}")
    return FieldFilters(asset, resource_class, show)


def justification_missing(row) -> bool:
    return bool(row.justification_required) and not row.justification.strip()


def field_blocks(row) -> list[str]:
    """What stops this field's booking from being submitted, in words (empty: nothing)."""
    out = []
    if justification_missing(row):
        out.append("justification required: " + "; ".join(row.justification_required))
    if any(v is None for v in (row.booked_low_bscf, row.booked_best_bscf, row.booked_high_bscf)):
        out.append("no computed volume for every case: override each case with a reason")
    return out


def apply(rows, f: FieldFilters) -> list:
    keep = {
        "": lambda r: True,
        "justification_missing": justification_missing,
        "flags": lambda r: bool(r.flags),
        "newer": lambda r: r.newer_estimate_id is not None,
        "blocked": lambda r: bool(field_blocks(r)),
    }[f.show]
    return [
        r
        for r in rows
        if (not f.asset or r.asset_name == f.asset)
        and (not f.resource_class or r.resource_class == f.resource_class)
        and keep(r)
    ]
