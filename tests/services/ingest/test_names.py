"""Names that look alike or hide characters (issue 18, point 11): NFKC, no invisible or format
characters, and no name that looks like another in use (UTS #39 skeletons)."""

import datetime as dt
import re
import unicodedata

import pytest
from sqlalchemy import select

from server.db.models import Well
from server.services.ingest.files import cells
from server.services.ingest.files.names import DEFAULT_IGNORABLE, Lookalikes, skeleton
from server.services.ingest.service import check_upload, store_upload
from tests.factories import make_field

TODAY = dt.date(2026, 12, 1)
FIELDS = (
    "field,asset,datum_depth_ft,reservoir_temperature_degF,initial_pressure_psia,abandonment_pressure_psia\n"
)


@pytest.mark.parametrize(
    "value, message",
    [
        ("RA-1\u200b", "U+200B ZERO WIDTH SPACE"),  # Cf (UnicodeData.txt)
        ("R\u202eA-1", "U+202E RIGHT-TO-LEFT OVERRIDE"),  # Cf, the "Trojan Source" character
        ("\u200b\u200c\u2060", "format character"),  # a name made only of invisible characters
        ("W\u00ad1", "U+00AD SOFT HYPHEN"),  # Cf
        ("W\u31641", "invisible character"),  # HANGUL FILLER: Lo, but Default_Ignorable_Code_Point
        ("W-1\ufe0f", "U+FE0F VARIATION SELECTOR-16"),  # Mn, Default_Ignorable_Code_Point
        ("W-1\U000e0041", "U+E0041 TAG LATIN CAPITAL LETTER A"),  # Cf (tag characters)
        ("W-\ue0001", "private-use"),  # Co
        ("W\u16801", "space other than the plain space"),  # Zs OGHAM SPACE MARK, kept by NFKC
        ("\u0301W", "begins with a combining mark"),
        ("…", "has no letter or digit"),  # NFKC: "..."
        ("＝SUM(1)", "would run it as a formula"),  # FULLWIDTH EQUALS SIGN, NFKC "=" (UAX #15)
    ],
)
def test_names_with_hidden_or_unusual_characters_are_refused(value, message):
    with pytest.raises(cells.CellError, match=re.escape(message)):
        cells.name(value)


def test_names_are_stored_in_nfkc():
    # Compatibility decompositions from UnicodeData.txt (UAX #15): FULLWIDTH LATIN CAPITAL LETTER W
    # -> W, NO-BREAK SPACE -> SPACE, LATIN SMALL LIGATURE FI -> fi, ROMAN NUMERAL TWELVE -> XII
    assert cells.name("Ｗ－１") == "W-1"
    assert cells.name("North\u00a0Flank") == "North Flank"
    assert cells.name("\ufb01eld") == "field"
    assert cells.name("Unit \u216b") == "Unit XII"
    assert cells.name("Ölberg") == "Ölberg"  # already NFC/NFKC: unchanged


def test_every_format_and_default_ignorable_character_is_refused():
    # Every Cf character of Python's UnicodeData.txt (14.0) and every Default_Ignorable_Code_Point
    # of DerivedCoreProperties.txt (15.0) that NFKC keeps, inside an otherwise plain name.
    listed = {cp for lo, hi in DEFAULT_IGNORABLE for cp in range(lo, hi + 1)}
    cf = {cp for cp in range(0x110000) if unicodedata.category(chr(cp)) == "Cf"}
    for cp in sorted(cf | listed):
        value = f"W{chr(cp)}1"
        if unicodedata.normalize("NFKC", value) == "W1":
            continue  # NFKC removes it (none in 14.0; kept for later Unicode versions)
        with pytest.raises(cells.CellError, match="cannot see"):
            cells.name(value)


@pytest.mark.parametrize(
    "source, prototype",
    [
        # Lines of confusables.txt 16.0.0 (unicode-org/icu, icu4c/source/data/unidata/confusables.txt),
        # unchanged since the 13.0.0 table shipped here
        ("\u2010", "-"),  # HYPHEN -> HYPHEN-MINUS
        ("\u2212", "-"),  # MINUS SIGN -> HYPHEN-MINUS
        ("\u2013", "-"),  # EN DASH -> HYPHEN-MINUS
        ("\u00a0", " "),  # NO-BREAK SPACE -> SPACE
        ("\u05ad", "\u0596"),  # HEBREW ACCENT DEHI -> HEBREW ACCENT TIPEHA
        ("\u0310", "\u0306\u0307"),  # COMBINING CANDRABINDU -> BREVE, DOT ABOVE
        ("\ufe4d", "_"),  # DASHED LOW LINE -> LOW LINE
    ],
)
def test_skeleton_follows_unicodes_confusables_data(source, prototype):
    assert skeleton(source) == unicodedata.normalize("NFD", prototype)


def test_look_alikes_of_uts39():
    # UTS #39 §4: X and Y are confusable when skeleton(X) == skeleton(Y). Cyrillic а (U+0430),
    # р (U+0440), у (U+0443) and Latin l/1 are the textbook cases (from memory of the report's
    # examples; each mapping is a line of confusables.txt).
    assert skeleton("раураl") == skeleton("paypal")
    assert skeleton("RА-1") == skeleton("RA-1")  # CYRILLIC CAPITAL LETTER A
    assert skeleton("RA-l") == skeleton("RA-1")  # DIGIT ONE -> LATIN SMALL LETTER L
    seen = Lookalikes(["RA-1", "North"])
    assert seen.twin("ra-1") is None  # the same name, case aside: matched, not a look-alike
    assert seen.twin("nоrth") == "North"  # Cyrillic о, and lower case
    assert seen.twin("RA  1") is None and Lookalikes(["RA 1"]).twin("RA  1") == "RA 1"


@pytest.fixture
def ra(session):
    f = make_field(session, name="Ridge", wells=("RA-1", "RA-2"), asset="North")
    f.wells[0].compartment = "north"
    session.commit()
    return f


def _errors(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


def test_a_well_that_looks_like_a_stored_one_is_refused(session, ra):
    data = "field,well,compartment\nRidge,RА-3,north\nRidge,RА-1,north\nRidge,RA-4,nоrth\n".encode()
    plan = check_upload(session, kind="wells", data=data, today=TODAY)
    errors = _errors(plan)
    assert [(r, c) for r, c, _ in errors] == [(3, "well"), (4, "compartment")]
    assert (
        "looks the same as the well 'RA-1'" in errors[0][2]
        and "U+0410 CYRILLIC CAPITAL LETTER A" in errors[0][2]
    )
    assert "looks the same as the compartment 'north'" in errors[1][2]


def test_an_ascii_look_alike_is_a_warning(db, ra):
    data = b"field,well\nRidge,RA-l\n"
    result = store_upload(db, kind="wells", data=data, today=TODAY)
    assert result.status == "needs_confirmation"
    assert "looks like the well 'RA-1'" in result.plan.report.warnings[0].message
    assert store_upload(db, kind="wells", data=data, today=TODAY, accept_warnings=True).status == "committed"
    with db.session() as s:
        assert "RA-l" in set(s.execute(select(Well.name)).scalars())


def test_fields_assets_and_basins_that_look_alike_are_refused(session, ra):
    rows = [
        "Ridgе,North,,9000,190,4000,500",  # CYRILLIC SMALL LETTER IE for e
        "Upland,Nоrth,,9000,190,4000,500",  # Cyrillic о in the asset
        "Vale,South,Test Basіn,9000,190,4000,500",  # Ukrainian і in the basin
        "Hollow,South,,9000,190,4000,500",
        "Hоllow,South,,9000,190,4000,500",  # the same file's own earlier field
    ]
    data = (FIELDS.replace("asset,", "asset,basin,") + "\n".join(rows) + "\n").encode()
    plan = check_upload(session, kind="fields", data=data, today=TODAY)
    assert [(r, c) for r, c, _ in _errors(plan)] == [(2, "field"), (3, "asset"), (4, "basin"), (6, "field")]


def test_a_limited_user_is_not_told_about_look_alikes_in_other_assets(session, ra):
    other = make_field(session, name="Elsewhere", asset="South")
    session.commit()
    data = (FIELDS + "Ridgе,South,9000,190,4000,500\n").encode()
    plan = check_upload(session, kind="fields", data=data, today=TODAY, asset_ids=frozenset({other.asset_id}))
    assert not any("looks" in m for _, _, m in _errors(plan))
