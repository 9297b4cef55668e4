"""The headline's contract: each model's outcome, the basis and the parts of its range.

Every number is at the field's standard conditions [Bscf]. Ranges are P90 (low) to
P10 (high), an 80 % range, as reserves are booked (SPE-PRMS 2018 §2.2: probabilistic
low/best/high at 90/50/10 % probability of being met or exceeded).
"""

from __future__ import annotations

from dataclasses import dataclass

#: The basis an engineer may choose: "automatic" (the rule of :mod:`.rules`) or a model key.
AUTOMATIC = "automatic"
BASIS_MODELS = (
    "single_tank",  # the straight p/z line
    "tank_ce",  # rock and water expansion (ce fitted, or given in the choices)
    "aquifer_pot",
    "aquifer_fetkovich",
    "aquifer_veh_radial",
    "two_tank",
    "multi_tank",
    "connected_tank",  # the p/z line of the wells that share one trend, the others set apart
    "volumetric",  # the volumetric estimate, while there is too little depletion (headline/volumetric.py)
)
BASIS_CHOICES = (AUTOMATIC, *BASIS_MODELS)


@dataclass(frozen=True)
class ModelOutcome:
    """What one model says the field holds and will give up at the abandonment pressure."""

    model: str  # key, one of BASIS_MODELS
    title: str  # for people
    giip_bscf: float | None
    giip_low_bscf: float | None  # the model's own interval (confidence level of the choices)
    giip_high_bscf: float | None
    eur_bscf: float | None  # cumulative gas when the producing tank reaches the abandonment pressure
    recovery_factor_frac: float | None
    remaining_bscf: float | None  # EUR less the gas produced to date
    determined: bool  # the data determine the model's parameters (none at a search bound)
    status: str  # for people: "determined", or why not ("not determined: ...", "not fitted: ...")
    eur_method: str  # for people: how EUR was found (closed form, or stepped at a stated rate)
    delta_aicc: float | None = None  # against the best model of the comparison
    akaike_weight: float | None = None
    hub_giip_bscf: float | None = None  # tank networks: the GIIP of the tank the wells produce from
    network_read: bool = False  # connected tank read from a two-tank fit (the neighbour's feed modelled)

    @property
    def has_results(self) -> bool:
        """A GIIP and an EUR: the model can be the basis."""
        return self.giip_bscf is not None and self.eur_bscf is not None


@dataclass(frozen=True)
class RangePart:
    """One source of uncertainty in the booked range, as a standard deviation of ln GIIP."""

    key: str  # "scatter", "models", "metering", "gauge", "z_factor", "neighbour"
    title: str  # for people
    sigma_ln: float  # standard deviation of ln GIIP [-] (x 100: roughly per cent)
    share_frac: float  # its share of the total variance


@dataclass(frozen=True)
class Basis:
    """The headline: the model the numbers come from, why, and its booked range."""

    model: str  # key of the model the headline comes from
    title: str
    source: str  # "automatic" or "engineer"
    reason: str  # why this basis, in the reader's words
    recommended_model: str  # what the automatic rule chose (the same as model when automatic)
    recommended_title: str
    recommended_reason: str
    giip_bscf: float  # best (P50)
    giip_low_bscf: float | None  # P90
    giip_high_bscf: float | None  # P10 (None: unbounded)
    eur_bscf: float | None
    eur_low_bscf: float | None
    eur_high_bscf: float | None
    recovery_factor_frac: float | None
    remaining_bscf: float | None
    range_parts: tuple[RangePart, ...]
    range_kind: str  # e.g. "P90-P10: data scatter, model spread and systematic inputs combined"
    engineer_reason: str | None = None  # the engineer's stated reason when source == "engineer"
    notes: tuple[str, ...] = ()
