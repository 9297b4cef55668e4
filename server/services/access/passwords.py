"""Password hashing (Argon2id) and the password policy.

The policy follows NIST SP 800-63B section 5.1.1.2 (memorized secrets): a minimum length, no
composition rules, and a check against a list of commonly used passwords, repetitive or sequential
characters and context-specific words (the user name, the service's name).
"""

from __future__ import annotations

import re
from functools import lru_cache

from argon2 import PasswordHasher
from argon2.exceptions import InvalidHashError, VerificationError

from ...settings import PROJECT_ROOT

COMMON_PASSWORDS_FILE = PROJECT_ROOT / "server" / "data" / "common-passwords.txt"
MAX_LENGTH = 1024  # Argon2 takes any length; a cap keeps a request from carrying megabytes
_LEET = str.maketrans({"0": "o", "1": "l", "3": "e", "4": "a", "5": "s", "7": "t", "@": "a", "$": "s"})
_EDGE = re.compile(r"^[\W\d_]+|[\W\d_]+$")

# argon2-cffi's defaults are RFC 9106's second recommended (low-memory) Argon2id profile.
_hasher = PasswordHasher()
# Verifying against this when the user does not exist takes as long as a real check, so the
# response time does not tell whether a user name exists.
_DUMMY_HASH = _hasher.hash("not a real password, only for timing")


class PasswordPolicyError(ValueError):
    """The password is not acceptable; the message says why."""


def hash_password(password: str) -> str:
    return _hasher.hash(password)


def verify_password(password_hash: str | None, password: str) -> bool:
    """True when ``password`` matches; a missing hash still costs one verification."""
    if len(password) > MAX_LENGTH:
        return False
    try:
        return _hasher.verify(password_hash or _DUMMY_HASH, password) and password_hash is not None
    except (VerificationError, InvalidHashError):
        return False


def needs_rehash(password_hash: str) -> bool:
    return _hasher.check_needs_rehash(password_hash)


@lru_cache(maxsize=1)
def common_passwords() -> frozenset[str]:
    lines = COMMON_PASSWORDS_FILE.read_text(encoding="utf-8").splitlines()
    return frozenset(x.strip().lower() for x in lines if x.strip() and not x.startswith("#"))


def _candidates(password: str) -> set[str]:
    low = password.lower()
    forms = {low, low.translate(_LEET)}
    forms |= {_EDGE.sub("", f) for f in list(forms)}
    forms |= {f.translate(_LEET) for f in list(forms)}
    forms |= {f.replace(" ", "") for f in list(forms)}
    return {f for f in forms if f}


def _repeats_a_unit(text: str) -> bool:
    """True for 'aaaa', 'abcabcabc', '12341234'."""
    return len(text) > 1 and (text + text).find(text, 1) < len(text)


def _is_sequence(text: str) -> bool:
    """True for 'abcdefgh', '987654321' (each character one code point from the last)."""
    steps = {ord(b) - ord(a) for a, b in zip(text, text[1:], strict=False)}
    return len(text) > 2 and steps in ({1}, {-1})


def check_password(password: str, *, username: str = "", min_length: int = 12) -> None:
    """Raise PasswordPolicyError with a plain reason if the password is too weak."""
    if len(password) < min_length:
        raise PasswordPolicyError(f"the password must have at least {min_length} characters")
    if len(password) > MAX_LENGTH:
        raise PasswordPolicyError(f"the password must have at most {MAX_LENGTH} characters")
    forms = _candidates(password)
    if forms & common_passwords():
        raise PasswordPolicyError("this password is one of the most commonly used; choose another")
    letters = {re.sub(r"[\W\d_]", "", f) for f in forms}
    if any(_repeats_a_unit(f) or _is_sequence(f) for f in forms | {x for x in letters if len(x) > 2}):
        raise PasswordPolicyError("the password repeats or counts through characters; choose another")
    context = {w for w in (username.lower(), "tankbook") if len(w) >= 3}
    for f in forms:
        stripped = f
        for w in context:
            stripped = stripped.replace(w, "")
        if len(stripped) < 6:
            raise PasswordPolicyError("the password is too close to your user name or to 'tankbook'")
