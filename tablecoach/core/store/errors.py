"""The store's errors, and SQLite's errors named as one line a player can act on."""

from __future__ import annotations

import sqlite3
from pathlib import Path


class StoreError(ValueError):
    """The database cannot be used as asked; the message names the file and what to do."""


class DamagedStoreError(StoreError):
    """The file is damaged (SQLite says so, or fails the integrity check)."""


def fix_hint(path: Path) -> str:
    """What to do with a file the store refuses: it was left as it was."""
    return (
        f"it was left untouched; move or rename {path.name} (or use --data-dir for another "
        "folder) to start a new database"
    )


def sqlite_error(path: Path, exc: sqlite3.Error) -> StoreError:
    """An SQLite error on ``path`` as one line that names the cause and what to do.

    The cause comes from SQLite's result code (``sqlite_errorname``, Python 3.11+), else from
    its message: a full disk, a permission problem, a failing disk, a lock held by another
    window, or a damaged file. Only the last says to restore a backup.
    """
    code = str(getattr(exc, "sqlite_errorname", "") or "")
    msg = str(exc)
    low = msg.lower()
    if code == "SQLITE_FULL" or "disk is full" in low:
        return StoreError(
            f"the disk holding {path} is full: nothing more was written and what was saved "
            "before is safe; free some space and try again"
        )
    if code.startswith(("SQLITE_READONLY", "SQLITE_PERM", "SQLITE_CANTOPEN", "SQLITE_AUTH")) or any(
        w in low for w in ("readonly", "read-only", "permission", "unable to open")
    ):
        return StoreError(
            f"cannot write {path}: permission denied or a read-only place ({msg}); check the "
            "file's and folder's permissions, or use --data-dir for a folder you can write to"
        )
    if code.startswith(("SQLITE_BUSY", "SQLITE_LOCKED")) or "locked" in low or "busy" in low:
        return StoreError(
            f"the database {path} is busy (another tablecoach window is writing); "
            "try again in a moment"
        )
    if code.startswith("SQLITE_IOERR") or "disk i/o" in low:
        return StoreError(
            f"reading or writing {path} failed (a disk input/output error: {msg}); check that "
            "the disk is attached and healthy, then try again"
        )
    if code.startswith(("SQLITE_CORRUPT", "SQLITE_NOTADB")) or any(
        w in low for w in ("malformed", "not a database", "corrupt")
    ):
        return DamagedStoreError(
            f"the database {path} is damaged or not a tablecoach database ({msg}); "
            f"{fix_hint(path)}, or restore it from a backup ('tablecoach restore FILE')"
        )
    return StoreError(f"the database {path} could not be used ({msg}); try again")
