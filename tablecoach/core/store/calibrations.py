"""The calibrations repository: each fitted calibration kept, the newest in use."""

from __future__ import annotations

import json
from typing import Any

from ..records import utc_now
from .connection import Connection
from .errors import StoreError
from .rows import iso_utc


class Calibrations(Connection):
    """The calibrations table: parameters as JSON per table and player."""

    def save_calibration(
        self, table: str, player: str, params: dict[str, Any], attempts: int
    ) -> None:
        """Keep a fitted calibration (history is kept; the newest is the one in use)."""
        try:
            text = json.dumps(params, sort_keys=True, allow_nan=False)
        except (TypeError, ValueError) as exc:
            raise StoreError(f"calibration parameters must be plain JSON values ({exc})") from None
        with self.transaction() as c:
            c.execute(
                "INSERT INTO calibrations (table_name, player, params, attempts, at) "
                "VALUES (?, ?, ?, ?, ?)",
                (table, player, text, int(attempts), iso_utc(utc_now())),
            )

    def calibration(self, table: str, player: str) -> dict[str, Any] | None:
        """The newest calibration for a table and player: {"params", "attempts", "when"}."""
        with self.reading() as c:
            r = c.execute(
                "SELECT params, attempts, at FROM calibrations WHERE table_name = ? AND player = ? "
                "ORDER BY id DESC LIMIT 1",
                (table, player),
            ).fetchone()
        if r is None:
            return None
        return {"params": json.loads(r[0]), "attempts": int(r[1]), "when": r[2]}

    def calibrations(self, table: str, player: str) -> list[dict[str, Any]]:
        """Every stored calibration for a table and player, oldest first."""
        with self.reading() as c:
            rows = c.execute(
                "SELECT params, attempts, at FROM calibrations WHERE table_name = ? AND player = ? "
                "ORDER BY id",
                (table, player),
            ).fetchall()
        return [{"params": json.loads(p), "attempts": int(n), "when": w} for p, n, w in rows]
