"""The headline of a stored estimate for people: its basis (which model the numbers come from,
chosen by the evidence rule or by an engineer), the straight p/z line beside it, the parts of
the booked range and every model's own outcome (issue 12). Plain data from the stored row and
its ``detail`` JSON (``engine.headline.types`` serialised); model keys become titles here.

An estimate stored before the engine named a basis has none: the line is then the headline.
"""

from __future__ import annotations

from dataclasses import dataclass

from .. import words

SOURCE_WORDS = {"automatic": "automatic (the evidence rule)", "engineer": "engineer's choice"}


@dataclass(frozen=True)
class OutcomeRow:
    model: str
    title: str
    giip_bscf: float | None
    giip_low_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    recovery_factor_frac: float | None
    remaining_bscf: float | None
    determined: bool
    status: str
    eur_method: str
    delta_aicc: float | None
    has_results: bool
    is_basis: bool


@dataclass(frozen=True)
class RangePartRow:
    key: str
    title: str
    plus_minus_pct: float  # 100 x sigma of ln GIIP: roughly ± per cent
    share_frac: float  # of the total variance


@dataclass(frozen=True)
class Headline:
    """What the field page's headline shows; ``basis`` None: the straight line is the headline."""

    status: str  # the estimate's ("ok", "refused", "error"; "none" without an estimate)
    model: str | None
    title: str  # the basis in words ("Straight p/z line ..." without a basis)
    source: str | None  # "automatic" / "engineer" (None: no basis named)
    source_words: str
    reason: str
    engineer_reason: str | None
    recommended_model: str | None
    recommended_title: str
    recommended_reason: str
    range_kind: str
    line_low_bscf: float | None
    line_best_bscf: float | None
    line_high_bscf: float | None
    line_eur_bscf: float | None
    range_parts: tuple[RangePartRow, ...]
    outcomes: tuple[OutcomeRow, ...]
    notes: tuple[str, ...]

    @property
    def has_basis(self) -> bool:
        return self.source is not None

    @property
    def is_line(self) -> bool:
        return self.model in (None, "single_tank")

    @property
    def choosable(self) -> tuple[OutcomeRow, ...]:
        """The models an engineer may base the headline on (those with a GIIP and an EUR)."""
        return tuple(o for o in self.outcomes if o.has_results)


def _outcome(o: dict, basis_model: str | None) -> OutcomeRow:
    giip, eur = o.get("giip_bscf"), o.get("eur_bscf")
    determined = bool(o.get("determined"))
    return OutcomeRow(
        model=o.get("model") or "",
        title=o.get("title") or words.model_title(o.get("model")),
        giip_bscf=giip,
        giip_low_bscf=o.get("giip_low_bscf"),
        giip_high_bscf=o.get("giip_high_bscf"),
        eur_bscf=eur,
        recovery_factor_frac=o.get("recovery_factor_frac"),
        remaining_bscf=o.get("remaining_bscf"),
        determined=determined,
        status=words.plain(o.get("status") or ("determined" if determined else "not determined")),
        eur_method=words.plain(o.get("eur_method") or ""),
        delta_aicc=o.get("delta_aicc"),
        has_results=giip is not None and eur is not None,
        is_basis=o.get("model") == basis_model,
    )


def _part(p: dict) -> RangePartRow:
    sigma = p.get("sigma_ln") or 0.0
    return RangePartRow(p.get("key") or "", p.get("title") or "", 100.0 * sigma, p.get("share_frac") or 0.0)


def headline(estimate, detail: dict | None) -> Headline:
    """The headline of ``estimate`` (an Estimate row or EstimateSummary, or None) from its detail."""
    detail = detail or {}
    status = estimate.status if estimate is not None else "none"
    b = detail.get("basis") if status == "ok" else None
    line = (
        getattr(estimate, "line_giip_low_bscf", None),
        getattr(estimate, "line_giip_best_bscf", None),
        getattr(estimate, "line_giip_high_bscf", None),
    )
    if status == "ok" and all(v is None for v in line):  # stored before the line had its own columns
        line = tuple(detail.get(f"line_giip_{k}_bscf") for k in ("low", "best", "high"))
        if all(v is None for v in line) and b is None:
            line = (estimate.giip_low_bscf, estimate.giip_best_bscf, estimate.giip_high_bscf)
    line_eur = detail.get("line_eur_bscf")
    if line_eur is None and b is None and status == "ok":
        line_eur = estimate.eur_bscf
    model = (b or {}).get("model")
    outcomes = tuple(_outcome(o, model) for o in detail.get("outcomes") or ()) if status == "ok" else ()
    source = (b or {}).get("source")
    line_title = words.model_title("single_tank")
    return Headline(
        status=status,
        model=model,
        title=(b or {}).get("title") or (words.model_title(model) if model else line_title),
        source=source,
        source_words=SOURCE_WORDS.get(source, "the straight line (no basis named)") if status == "ok" else "",
        reason=words.plain((b or {}).get("reason")),
        engineer_reason=(b or {}).get("engineer_reason"),
        recommended_model=(b or {}).get("recommended_model"),
        recommended_title=(b or {}).get("recommended_title") or "",
        recommended_reason=words.plain((b or {}).get("recommended_reason")),
        range_kind=words.plain((b or {}).get("range_kind")),
        line_low_bscf=line[0] if status == "ok" else None,
        line_best_bscf=line[1] if status == "ok" else None,
        line_high_bscf=line[2] if status == "ok" else None,
        line_eur_bscf=line_eur if status == "ok" else None,
        range_parts=tuple(_part(p) for p in (b or {}).get("range_parts") or ()),
        outcomes=outcomes,
        notes=tuple(words.plain(n) for n in (b or {}).get("notes") or ()),
    )
