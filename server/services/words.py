"""Words for people: the one place where the engine's keys become what pages, exports and
the audit trail say (issue 12, point 9). Model keys (``single_tank``), parameter names
(``giip_tank1_bscf``), choice keys and day numbers never reach a reader; the JSON API keeps
the keys (scripts depend on them).

``tests/services/test_words.py`` checks that every key the engine can emit has words here.
"""

from __future__ import annotations

import datetime as dt
import re

from ..engine.aquifer.models import SPECS as AQUIFER_SPECS
from ..engine.headline.outcomes import TITLES as OUTCOME_TITLES
from ..engine.headline.types import AUTOMATIC
from ..engine.modelfit import PARAMETER_WORDS as ENGINE_PARAMETER_WORDS
from ..engine.modelfit import parameter_words as engine_parameter_words
from ..engine.pvt.gas import Z_METHOD_LABELS

#: Every model key the engine emits (ModelFit.name, ModelOutcome.model, Basis.model,
#: FieldAnalysis.method), in the reader's words.
#: The headline's own titles (engine/headline/outcomes.py) win, so a model reads the same in
#: the outcome table, the basis line and the choices.
MODEL_TITLES = {
    **{k: s.title for k, s in AQUIFER_SPECS.items()},
    **OUTCOME_TITLES,
    "none": "no method (nothing was estimated)",
}

#: Short names of the basis for narrow table cells (the full title goes in the tooltip).
MODEL_SHORT = {
    "single_tank": "Straight line",
    "tank_ce": "Expansion (ce)",
    "aquifer_pot": "Pot aquifer",
    "aquifer_fetkovich": "Fetkovich aq.",
    "aquifer_veh_radial": "Radial aquifer",
    "two_tank": "Two tanks",
    "multi_tank": "Tanks",
    "connected_tank": "Connected tank",
    "volumetric": "Volumetric",
}


def model_short(key: str | None) -> str:
    """A model's short name for a table cell; its title when it has none."""
    return MODEL_SHORT.get(key or "", "") or model_title(key)


#: The basis choice: the evidence rule, or a model.
AUTOMATIC_TITLE = "Automatic (the evidence rule)"


def _unit(key: str) -> str:
    return next((u for end, u in _PARAMETER_UNITS if key.endswith(end)), "")


#: Units of fitted parameters by the end of their key (the words are the engine's own,
#: engine/modelfit.parameter_words, so notes and pages say the same).
_PARAMETER_UNITS = (
    ("_scf_cp_per_day_psi2", "scf cP/(day psi²)"),
    ("_scf_per_day_psi2", "scf/(day psi²)"),
    ("_rb_per_day_psi", "rb/(day psi)"),
    ("_rb_per_psi", "rb/psi"),
    ("_per_psi", "1/psi"),
    ("_per_day", "1/day"),
    ("_bscf", "Bscf"),
    ("_psia", "psia"),
    ("_rb", "rb"),
)
PARAMETER_WORDS = {k: f"{v} [{u}]" if (u := _unit(k)) else v for k, v in ENGINE_PARAMETER_WORDS.items()}

#: The analysis choices (audit summaries and the read-only list of the field page).
CHOICE_WORDS = {
    "abandonment_pressure_psia": "abandonment pressure [psia]",
    "z_method": "z-factor correlation",
    "datum_correction": "gauge pressures to the datum",
    "condensate_correction": "condensate as wet-gas equivalent",
    "use_lab_table": "the lab z table",
    "anchor_initial": "line anchored at the initial p/z",
    "overpressure_mode": "overpressure (rock and water expansion)",
    "effective_compressibility_per_psi": "ce [1/psi]",
    "basis_model": "basis of the headline",
    "basis_reason": "reason for the basis",
}
_VALUE_WORDS = {
    "z_method": dict(Z_METHOD_LABELS),
    "overpressure_mode": {"off": "off", "given": "ce given", "fitted": "ce fitted to the data"},
}

#: Internal names that engine text may contain, and what a reader sees instead.
_TEXT_WORDS = {
    "rss_psia2": "the weighted sum of squared p/z residuals",
    "giip_low/high": "the GIIP interval",
    **{k: v.split(" [")[0] for k, v in PARAMETER_WORDS.items() if "_" in k},  # not "red" in prose
    **{k: v for k, v in MODEL_TITLES.items() if "_" in k},
}
_TEXT_PATTERN = re.compile(
    r"\b(" + "|".join(re.escape(k) for k in sorted(_TEXT_WORDS, key=len, reverse=True)) + r")(?![\w/])"
)
_DAY = re.compile(r"\bon day (\d{3,6})\b")
_EPOCH = dt.date(1970, 1, 1)  # the engine's time origin (DEVELOPERS.md glossary: t_days)


def model_title(key: str | None) -> str:
    """A model key in words (an unknown key is shown as it is: it is then a bug to fix here)."""
    if key is None:
        return "—"
    if key == AUTOMATIC:
        return AUTOMATIC_TITLE
    return MODEL_TITLES.get(key, key)


def parameter_words(name: str) -> str:
    """A fitted parameter's name in words (the engine's), with its unit."""
    words, unit = engine_parameter_words(name), _unit(name)
    return f"{words} [{unit}]" if unit else words


_METHOD = re.compile(r"^pz-(wls|ols)(-anchored)?(?:-ce-(given|fitted))?$")


def method_words(key: str | None) -> str:
    """The p/z estimate's method key ("pz-wls-anchored", ...) in words; model keys by title."""
    m = _METHOD.match(key or "")
    if m is None:
        return model_title(key)
    text = ("Weighted" if m.group(1) == "wls" else "Ordinary") + " least-squares p/z line"
    if m.group(2):
        text += ", anchored at pi/zi"
    if m.group(3):
        text += f", Ramagost-Farshad correction with {'a given ce' if m.group(3) == 'given' else 'ce fitted'}"
    return text


def date_of_day(t_days: float) -> str:
    """The engine's day number (days since 1970-01-01) as a date."""
    return (_EPOCH + dt.timedelta(days=round(float(t_days)))).isoformat()


def plain(text: str | None) -> str:
    """Engine text (notes, flag reasons, statements) with internal names and day numbers in words."""
    if not text:
        return ""
    text = _DAY.sub(lambda m: "on " + date_of_day(float(m.group(1))), str(text))
    text = _TANK_WORDS.sub(lambda m: engine_parameter_words(m.group(0)), text)
    return _TEXT_PATTERN.sub(lambda m: _TEXT_WORDS[m.group(1)], text)


_TANK_WORDS = re.compile(r"\b(giip_tank\d+_bscf|transmissibility_tank\d+_\w+?_psi2)\b")


def choice_value(key: str, value) -> str:
    """A stored choice value in words."""
    if value is None:
        return "none"
    if isinstance(value, bool):
        return "on" if value else "off"
    if isinstance(value, float):
        return f"{value:.6g}"
    if key == "basis_model":
        return model_title(value)
    if key == "basis_reason":
        return f"“{value}”" if value else "none"
    return _VALUE_WORDS.get(key, {}).get(value, str(value))


def choice_name(key: str) -> str:
    """An analysis choice's name in words (other keys as they are)."""
    return CHOICE_WORDS.get(key, key)


def audit_value(key: str, value) -> str:
    """A value in an audit event's before/after: a choice in words, anything else as stored."""
    return choice_value(key, value) if key in CHOICE_WORDS else str(value)


def choice_change(key: str, old, new) -> str:
    """One changed choice for the audit trail: "basis of the headline Automatic → ..."."""
    return f"{CHOICE_WORDS.get(key, key)} {choice_value(key, old)} → {choice_value(key, new)}"
