"""Settings read from the environment (FLAREBOOK_*)."""
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
    session_idle_minutes: int = 120
    session_absolute_hours: int = 12
    # Shown on the sign-in page only for the invented demo school.
    show_demo_sign_ins: bool = False
    # Recorded tracks are larger than any other upload: a 2-hour 10 Hz GPX file is about 15 MB.
    track_upload_max_bytes: int = 20_000_000


@lru_cache
def get_settings() -> Settings:
    return Settings()
