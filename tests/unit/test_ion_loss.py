"""phasekit.paths.ion_loss_point: the first point of a path at which an ion enters a solid."""

import warnings

import pytest

import phasekit as pk
from phasekit.paths import IonLossPoint, ion_loss_point


@pytest.fixture(scope="module")
def path():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pk.ValidityWarning)
        return pk.evaporate(pk.Brine({"Na": 2.0, "K": 1.0, "Cl": 3.0}), temp_c=25, mode="fractional")


def test_first_solid_of_each_ion(path):
    app = path.events[path.events["event"] == "appears"].reset_index(drop=True)
    na, k, cl = (ion_loss_point(path, ion) for ion in ("Na", "K+", "Cl"))
    assert isinstance(na, IonLossPoint) and na.ion == "Na" and na.solid == "halite"
    assert k.ion == "K" and k.solid == "sylvite"
    assert cl.solid == app.loc[0, "solid"]  # chloride goes with whichever solid comes first
    assert na.concentration_factor == pytest.approx(float(app.loc[app["solid"] == "halite", "concentration_factor"].iloc[0]))
    # before its first solid an ion is only concentrated
    assert k.molality == pytest.approx(1.0 * k.concentration_factor, rel=1e-8)
    assert k.fraction_in_liquid == pytest.approx(1.0, abs=1e-8)
    assert set(k.liquid) == {"Na", "K", "Cl"} and k.liquid["K"] == k.molality
    # mass per cent of the liquid: 1 kg water + dissolved ions
    grams = k.liquid["Na"] * 22.98977 + k.liquid["K"] * 39.0983 + k.liquid["Cl"] * 35.453
    assert k.mass_percent == pytest.approx(100 * k.molality * 39.0983 / (1000 + grams), rel=1e-4)


def test_no_loss_on_a_short_path():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pk.ValidityWarning)
        p = pk.evaporate(pk.Brine({"Na": 1.0, "Cl": 1.0}), temp_c=25, concentration_factor=2.0)
    assert ion_loss_point(p, "Na") is None


def test_bad_input(path):
    with pytest.raises(pk.InputError, match="ion"):
        ion_loss_point(path, "Li")  # not in this brine
    with pytest.raises(pk.InputError):
        ion_loss_point(path, "Xx")
    with pytest.raises(pk.InputError, match="path"):
        ion_loss_point({"events": None}, "Na")
