"""Shared fixtures of the test suite."""

import warnings

import pytest

import phasekit as pk


@pytest.fixture(scope="session")
def model():
    return pk.default_model()


@pytest.fixture(autouse=True)
def _quiet_iapws():
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="Using extrapolated values")
        yield
