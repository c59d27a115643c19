"""Fixtures for the app's Pilot tests: a fresh data folder, a fixed seed, a fixed player."""

from __future__ import annotations

from typing import Any

import pytest


@pytest.fixture
def data_env(tmp_path, monkeypatch):
    """A fresh data and config folder for one test."""
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "data"))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "config"))
    monkeypatch.delenv("TABLECOACH_SEED", raising=False)
    return tmp_path


@pytest.fixture
def make_app(data_env):
    """Build the app on the fresh data folder with a fixed seed, player and ideal model."""
    from tablecoach.ui.app import build_app

    def make(**kw: Any):
        kw.setdefault("player", "tester")
        kw.setdefault("seed", 7)
        kw.setdefault("model", "ideal")
        kw.setdefault("drill", "one-rail-kicks")
        return build_app(**kw)

    return make
