"""The tables repository: the player's own table specs beside the built-in ones."""

from __future__ import annotations

import json
from collections.abc import Callable

from ..records import utc_now
from ..table import BUILTIN_TABLES, TableError, TableSpec
from ..table_files import table_from_mapping, table_to_mapping
from .connection import Connection
from .errors import StoreError
from .rows import iso_utc


class Tables(Connection):
    """The tables table: custom specs as JSON, looked up by name."""

    def save_table(self, spec: TableSpec) -> None:
        """Store (or replace) a custom table spec. Built-in names are reserved."""
        if spec.name in BUILTIN_TABLES:
            raise TableError(f"{spec.name!r} is a built-in table; give your table another name")
        data = json.dumps(table_to_mapping(spec), sort_keys=True)
        with self.transaction() as c:
            c.execute(
                "INSERT OR REPLACE INTO tables (name, spec, saved) VALUES (?, ?, ?)",
                (spec.name, data, iso_utc(utc_now())),
            )

    def tables(self) -> dict[str, TableSpec]:
        """The stored custom tables by name."""
        with self.reading() as c:
            rows = c.execute("SELECT name, spec FROM tables ORDER BY name").fetchall()
        return {name: self._spec(name, text) for name, text in rows}

    def _spec(self, name: str, text: str) -> TableSpec:
        try:
            data = json.loads(text)
        except json.JSONDecodeError:
            raise StoreError(
                f"the stored table {name!r} in {self.path} is damaged; add it again with "
                "'tablecoach tables add FILE'"
            ) from None
        return table_from_mapping(data, f"{self.path} (table {name!r})")

    def get_table(self, name: str) -> TableSpec:
        """A built-in or stored table by name; unknown names get a TableError listing both."""
        if name in BUILTIN_TABLES:
            return BUILTIN_TABLES[name]
        with self.reading() as c:
            r = c.execute("SELECT spec FROM tables WHERE name = ?", (name,)).fetchone()
            if r is None:
                stored = [x[0] for x in c.execute("SELECT name FROM tables ORDER BY name")]
        if r is not None:
            return self._spec(name, r[0])
        names = ", ".join([*BUILTIN_TABLES, *stored])
        raise TableError(
            f"unknown table {name!r}: known tables are {names}; "
            "add your own with 'tablecoach tables add FILE'"
        )

    def table_lookup(self) -> Callable[[str], TableSpec | None]:
        """name -> the built-in or stored TableSpec, None for an unknown or damaged one
        (what the landing bias asks for each table it meets); answers are kept."""
        cache: dict[str, TableSpec | None] = {}

        def look(name: str) -> TableSpec | None:
            if name not in cache:
                try:
                    cache[name] = self.get_table(name)
                except ValueError:
                    cache[name] = None
            return cache[name]

        return look
