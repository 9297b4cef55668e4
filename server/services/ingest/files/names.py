"""Names that look alike or hide characters (fields, wells, assets, basins, compartments).

A name is normalised to Unicode NFKC (full-width, ligature and other compatibility forms fold
to their plain letters, UAX #15), and refused when it holds a character the reader cannot see:
format characters (category Cf: zero-width space, right-to-left override, word joiner, ...),
the rest of Unicode's Default_Ignorable_Code_Point set (fillers, variation selectors), private
use and unassigned code points, or a space other than U+0020. Two different names are
*confusable* when their UTS #39 skeletons are equal (Unicode Technical Standard #39 §4:
NFD, each character replaced by its prototype from confusables.txt, NFD again); names are
compared also without case, as Tankbook matches them.
"""

from __future__ import annotations

import functools
import unicodedata
from pathlib import Path

CONFUSABLES = Path(__file__).resolve().parents[3] / "data" / "confusables-13.0.0.txt"

# Default_Ignorable_Code_Point, from DerivedCoreProperties.txt of Unicode 15.0.0 (Debian package
# unicode-data 15.0.0-1): characters that are not shown unless a font chooses to.
DEFAULT_IGNORABLE = (
    (0x00AD, 0x00AD), (0x034F, 0x034F), (0x061C, 0x061C), (0x115F, 0x1160), (0x17B4, 0x17B5),
    (0x180B, 0x180F), (0x200B, 0x200F), (0x202A, 0x202E), (0x2060, 0x206F), (0x3164, 0x3164),
    (0xFE00, 0xFE0F), (0xFEFF, 0xFEFF), (0xFFA0, 0xFFA0), (0xFFF0, 0xFFF8), (0x1BCA0, 0x1BCA3),
    (0x1D173, 0x1D17A), (0xE0000, 0xE0FFF),
)  # fmt: skip
_HIDDEN_CATEGORIES = {
    "Cf": "a format character",
    "Co": "a private-use character",
    "Cn": "an unassigned code point",
    "Cs": "a lone surrogate",
    "Cc": "a control character",
}


class NameRuleError(ValueError):
    """The name cannot be stored; the message says why (raised as a cell error by the caller)."""


def _describe(ch: str) -> str:
    return f"U+{ord(ch):04X} {unicodedata.name(ch, 'without a name')}"


def is_default_ignorable(ch: str) -> bool:
    cp = ord(ch)
    return any(lo <= cp <= hi for lo, hi in DEFAULT_IGNORABLE)


def clean_name(value: str) -> str:
    """``value`` in NFKC, or :class:`NameRuleError` naming the first hidden or unusual character."""
    name = unicodedata.normalize("NFKC", value).strip()
    for ch in name:
        category = unicodedata.category(ch)
        if category in _HIDDEN_CATEGORIES or is_default_ignorable(ch):
            what = _HIDDEN_CATEGORIES.get(category, "an invisible character")
            raise NameRuleError(f"contains {what} ({_describe(ch)}) that a reader cannot see; names must not")
        if category in ("Zs", "Zl", "Zp") and ch != " ":
            raise NameRuleError(f"contains a space other than the plain space ({_describe(ch)})")
    if name and unicodedata.category(name[0]).startswith("M"):
        raise NameRuleError(f"begins with a combining mark ({_describe(name[0])})")
    if name and not any(unicodedata.category(ch)[0] in "LN" for ch in name):
        raise NameRuleError("has no letter or digit")
    return name


@functools.cache
def _prototypes() -> dict[str, str]:
    out = {}
    for line in CONFUSABLES.read_text(encoding="utf-8").splitlines():
        if not line or line.startswith("#"):
            continue
        source, target = line.split("\t")
        out[chr(int(source, 16))] = "".join(chr(int(h, 16)) for h in target.split())
    return out


def skeleton(name: str) -> str:
    """UTS #39 §4 skeleton: NFD, every character mapped to its prototype, NFD again."""
    table = _prototypes()
    decomposed = unicodedata.normalize("NFD", name)
    return unicodedata.normalize("NFD", "".join(table.get(ch, ch) for ch in decomposed))


def lookalike_keys(name: str) -> frozenset[str]:
    """Keys under which two names look the same: the skeleton, also of the case-folded name,
    with runs of spaces as one."""
    plain = " ".join(name.split())
    return frozenset({skeleton(plain), skeleton(plain.casefold())})


def differing(a: str, b: str) -> str:
    """The characters of ``a`` that ``b`` writes differently, for a message."""
    odd = [ch for ch in a if ch not in b and not ch.isascii()] or [ch for ch in a if ch not in b]
    return ", ".join(_describe(ch) for ch in dict.fromkeys(odd)) or "spacing or case"


class Lookalikes:
    """Names already in use (stored or earlier in the file) by their look-alike keys."""

    def __init__(self, names=()):
        self._by_key: dict[str, str] = {}
        for n in names:
            self.add(n)

    def add(self, name: str) -> None:
        for key in lookalike_keys(name):
            self._by_key.setdefault(key, name)

    def twin(self, name: str) -> str | None:
        """An existing name that looks like ``name`` but is not the same name (case aside)."""
        for key in lookalike_keys(name):
            other = self._by_key.get(key)
            if other is not None and other.casefold() != name.casefold():
                return other
        return None
