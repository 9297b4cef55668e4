"""The upload preview's stored values in the reader's display units.

The preview lists rows as they would be stored (names with unit suffixes, oilfield units);
the page shows them as every other page does. The file's own units are reported apart
(the "How the file was read" table), in the file's terms.
"""

from __future__ import annotations

from ..display import DisplayUnits

#: Stored-name suffix -> display quantity (longest suffixes first).
SUFFIX_KINDS = (
    ("_mscf_per_day", "rate_mscf_per_day"),
    ("_rcf_per_scf", "bg"),
    ("_degF", "temperature"),
    ("_psia", "pressure"),
    ("_mscf", "gas_mscf"),
    ("_bscf", "gas_bscf"),
    ("_stb", "liquid_stb"),
    ("_ft3", "rock_volume"),
    ("_ft", "depth"),
)


def shown_value(du: DisplayUnits, name: str, value) -> tuple[str, str]:
    """(name without its unit suffix, value with the display unit) for a stored number;
    anything else as it is."""
    if isinstance(value, int | float) and not isinstance(value, bool):
        for suffix, kind in SUFFIX_KINDS:
            if name.endswith(suffix):
                return name[: -len(suffix)], du.show_with_unit(kind, float(value))
    return name, "" if value is None else str(value)


def display_preview(preview: dict | None, du: DisplayUnits) -> dict | None:
    """A copy of ``UploadPlan.preview()`` whose changes' values are display texts."""
    if not preview:
        return preview

    def shown(d: dict | None) -> dict | None:
        return None if d is None else dict(shown_value(du, k, v) for k, v in d.items())

    changes = [
        c | {"before": shown(c.get("before")), "after": shown(c.get("after"))} for c in preview["changes"]
    ]
    return preview | {"changes": changes}
