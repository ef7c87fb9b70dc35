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


#: the change of sylvite's ln K at 25 °C (a0) in the test overlays
SYLVITE_SHIFT = 0.2


@pytest.fixture(scope="session")
def test_overlays(tmp_path_factory):
    """Overlay files of invented values, for the tests only (paths as text): sylvite's ln K at 25 °C (a0)
    raised ("plus") or lowered ("minus") by SYLVITE_SHIFT from the embedded value (the two conflict), and
    one naming a solid the database does not have ("unknown")."""
    from phasekit.overlay import write_overlay

    d = tmp_path_factory.mktemp("overlays")
    a0 = pk.default_model().solids["sylvite"].coeffs[0]
    src = "invented for phasekit's tests (not a measurement)"
    files = {
        "plus": write_overlay(d / "sylvite_plus.toml", "test sylvite +0.2", src,
                              solids=[{"name": "sylvite", "a0": a0 + SYLVITE_SHIFT, "source": src}]),
        "minus": write_overlay(d / "sylvite_minus.toml", "test sylvite -0.2", src,
                               solids=[{"name": "sylvite", "a0": a0 - SYLVITE_SHIFT, "source": src}]),
        "unknown": write_overlay(d / "unknown_solid.toml", "test unknown solid", src,
                                 solids=[{"name": "unobtainite", "a0": 1.0, "source": src}]),
    }
    return {k: str(v) for k, v in files.items()}
