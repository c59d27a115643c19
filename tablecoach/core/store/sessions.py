"""The sessions repository: a practice session opened, ended, and listed with its counts."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

from ..records import utc_now
from .connection import Connection
from .errors import StoreError
from .rows import check_name, iso_utc


@dataclass(frozen=True, slots=True)
class SessionInfo:
    """One practice session with its attempt and hit counts."""

    id: int
    player: str
    table: str
    drill: str
    started: datetime
    ended: datetime | None
    attempts: int
    hits: int


class Sessions(Connection):
    """The sessions table; a session's attempts name it (``Attempt.session``)."""

    def start_session(
        self, player: str, table: str, drill: str, started: datetime | None = None
    ) -> int:
        """Open a session (adding the player if new); returns its id.

        ``started`` is when it began (aware; None: now), for sessions written after the fact.
        """
        player = check_name("player", player)
        table = check_name("table", table)
        when = iso_utc(started if started is not None else utc_now())
        with self.transaction() as c:
            c.execute("INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)", (player, when))
            cur = c.execute(
                "INSERT INTO sessions (player, table_name, drill, started) VALUES (?, ?, ?, ?)",
                (player, table, drill or "", when),
            )
            return int(cur.lastrowid or 0)

    def end_session(self, session_id: int) -> None:
        """Mark a session ended (ending it twice keeps the first end time)."""
        with self.transaction() as c:
            found = c.execute("SELECT 1 FROM sessions WHERE id = ?", (session_id,)).fetchone()
            if found is None:
                raise StoreError(f"there is no session {session_id} in {self.path}")
            c.execute(
                "UPDATE sessions SET ended = ? WHERE id = ? AND ended IS NULL",
                (iso_utc(utc_now()), session_id),
            )

    def sessions(self, player: str | None = None, table: str | None = None) -> list[SessionInfo]:
        """Sessions, oldest first, with their attempt and hit counts."""
        where, args = [], []
        if player is not None:
            where.append("s.player = ?")
            args.append(player)
        if table is not None:
            where.append("s.table_name = ?")
            args.append(table)
        sql = (
            "SELECT s.id, s.player, s.table_name, s.drill, s.started, s.ended, "
            "COUNT(a.id), COALESCE(SUM(a.result = 'hit'), 0) "
            "FROM sessions s LEFT JOIN attempts a ON a.session_id = s.id"
            + (" WHERE " + " AND ".join(where) if where else "")
            + " GROUP BY s.id ORDER BY s.started, s.id"
        )
        with self.reading() as c:
            rows = c.execute(sql, args).fetchall()
        return [
            SessionInfo(
                r[0],
                r[1],
                r[2],
                r[3],
                datetime.fromisoformat(r[4]),
                datetime.fromisoformat(r[5]) if r[5] else None,
                int(r[6]),
                int(r[7]),
            )
            for r in rows
        ]
