"""Fixtures for the window tests."""

import pytest

from model_sweeps import resistor_with_leads


@pytest.fixture
def r75():
    return resistor_with_leads()
