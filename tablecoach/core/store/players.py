"""The players repository: the names of everyone who has practised."""

from __future__ import annotations

from ..records import utc_now
from .connection import Connection
from .rows import check_name, iso_utc


class Players(Connection):
    """The players table (a player is also added by their first attempt or session)."""

    def players(self) -> list[str]:
        """Every player name, sorted."""
        with self.reading() as c:
            return [r[0] for r in c.execute("SELECT name FROM players ORDER BY name")]

    def ensure_player(self, name: str) -> None:
        """Add a player if not there yet."""
        name = check_name("player", name)
        with self.transaction() as c:
            c.execute(
                "INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)",
                (name, iso_utc(utc_now())),
            )
