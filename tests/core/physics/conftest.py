"""Shared fixtures for the physics tests."""

from __future__ import annotations

import pytest

from tablecoach.core.physics.params import BallModel, model_of
from tablecoach.core.table import TableSpec, builtin_table


@pytest.fixture
def table() -> TableSpec:
    return builtin_table("9ft")


@pytest.fixture
def model(table: TableSpec) -> BallModel:
    return model_of(table)
