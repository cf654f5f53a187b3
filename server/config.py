"""Settings read from the environment (FLAREBOOK_*)."""
from datetime import date
from functools import lru_cache
from pathlib import Path

from pydantic_settings import BaseSettings, SettingsConfigDict

PROJECT_ROOT = Path(__file__).resolve().parent.parent


class Settings(BaseSettings):
    model_config = SettingsConfigDict(env_prefix="FLAREBOOK_")

    # SQLite in the data folder by default; postgresql+psycopg://... for a multi-server school.
    database_url: str = f"sqlite:///{PROJECT_ROOT / 'data' / 'flarebook.sqlite3'}"
    # Behind HTTPS the session cookie gets the __Host- prefix and the Secure flag.
    secure_cookies: bool = False
    # OWASP ASVS 5.0 V7.3 (level 2): an idle session ends after at most 30 minutes.
    session_idle_minutes: int = 30
    session_absolute_hours: int = 12
    # Personal API tokens stop working this many days after they were made.
    token_days: int = 90
    # A sortie flown before this date is refused as a typing error (set it to the school's first record).
    records_begin: date = date(1980, 1, 1)
    # Request bodies above this size are refused before they are read (413).
    max_body_bytes: int = 1_000_000
    # Routes that take a flight track upload (track_upload_max_bytes below) and the only ones that
    # take a file; "{name}" matches one path segment.
    track_upload_paths: tuple[str, ...] = ("/api/v1/sorties/{id}/tracks", "/sorties/{id}/tracks")
    # Refusals of people not signed in are counted and written to the audit chain as one entry per period.
    stranger_audit_seconds: int = 60
    # Shown on the sign-in page only for the invented demo school.
    show_demo_sign_ins: bool = False
    # Recorded tracks are larger than any other upload: a 2-hour 10 Hz GPX file is about 15 MB.
    track_upload_max_bytes: int = 20_000_000
    # Spreadsheets of earlier records (CSV or XLSX): the other routes that take a file.
    import_upload_paths: tuple[str, ...] = ("/api/v1/imports", "/setup/imports")
    import_upload_max_bytes: int = 10_000_000


@lru_cache
def get_settings() -> Settings:
    return Settings()


def settings_of(session) -> Settings:
    """The app's settings for a service, from the session factory (create_app puts them there)."""
    return session.info.get("settings") or get_settings()
