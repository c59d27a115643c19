"""Where tablecoach keeps its files: every platformdirs call, and the environment overrides.

``TABLECOACH_DATA_DIR`` (also set by ``--data-dir``) moves the data folder, and
``TABLECOACH_CONFIG_DIR`` the configuration folder. Nothing is created on import: callers that
write make the folder first (``ensure_dir``).
"""

from __future__ import annotations

import os
from pathlib import Path

APP_NAME = "tablecoach"
DB_NAME = "tablecoach.sqlite3"


def _from_env(var: str) -> Path | None:
    value = os.environ.get(var, "").strip()
    return Path(value).expanduser() if value else None


def data_dir() -> Path:
    """The data folder: $TABLECOACH_DATA_DIR if set, else the platform's user data folder."""
    env = _from_env("TABLECOACH_DATA_DIR")
    if env is not None:
        return env
    import platformdirs  # lazy: only needed when no override is set

    return Path(platformdirs.user_data_dir(APP_NAME, appauthor=False))


def config_dir() -> Path:
    """The configuration folder: $TABLECOACH_CONFIG_DIR if set, else the platform's."""
    env = _from_env("TABLECOACH_CONFIG_DIR")
    if env is not None:
        return env
    import platformdirs

    return Path(platformdirs.user_config_dir(APP_NAME, appauthor=False))


def db_path(data: Path | None = None) -> Path:
    """The practice database file inside ``data`` (default: data_dir())."""
    return (data if data is not None else data_dir()) / DB_NAME


def user_drills_dir() -> Path:
    """The folder for a player's own drill packs (TOML files)."""
    return config_dir() / "drills"


def user_tables_dir() -> Path:
    """The folder for a player's own table files (TOML files)."""
    return config_dir() / "tables"


def ensure_dir(path: Path) -> Path:
    """Create a folder (and its parents) if missing; return it."""
    path.mkdir(parents=True, exist_ok=True)
    return path
