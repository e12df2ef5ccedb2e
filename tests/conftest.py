"""Shared fixtures."""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")

import pytest  # noqa: E402
from catalogue import CATALOGUE  # noqa: E402


@pytest.fixture(params=sorted(CATALOGUE))
def catalogue_scene(request):
    return request.param, CATALOGUE[request.param]()
