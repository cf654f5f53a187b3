"""Password hashing (Argon2id) and random tokens."""
import functools
import hashlib
import secrets

from argon2 import PasswordHasher
from argon2.exceptions import InvalidHashError, VerificationError

# argon2-cffi's defaults (Argon2id, 64 MiB, 3 passes, 4 lanes) are above the OWASP ASVS floor.
PRODUCTION_HASHER = PasswordHasher()
_hasher = PRODUCTION_HASHER


@functools.cache
def _dummy_hash() -> str:
    """Verified against when the email is unknown, so a refusal takes as long either way. Made on first
    use, not at import: every command would otherwise pay a production-cost hash at start."""
    return PRODUCTION_HASHER.hash("not-a-real-password")


def hash_password(password: str) -> str:
    return _hasher.hash(password)


def verify_password(password_hash: str | None, password: str) -> bool:
    try:
        return _hasher.verify(password_hash or _dummy_hash(), password) and password_hash is not None
    except (VerificationError, InvalidHashError):
        return False


def new_secret(prefix: str = "") -> str:
    return prefix + secrets.token_urlsafe(32)


def sha256_hex(value: str) -> str:
    return hashlib.sha256(value.encode()).hexdigest()
