"""Mixed-electrolyte checks.

Osmotic coefficient of standard seawater (S = 35, 25 °C): φ = 0.9014, Millero, F. J. &
Leung, W. H. (1976), Am. J. Sci. 276, 1035 (from memory). Composition: the reference
composition of Millero et al. (2008), Deep-Sea Res. I 55, 50 (from memory), in mol per
kg of water (35.165 g salt per kg seawater); the minor ions absent from the model are
lumped (Br- into Cl-, Sr2+ into Ca2+) and HCO3-/CO3--/B(OH)4- (0.1 % of the ionic
strength) are dropped with Na+ reduced to keep electroneutrality. Tolerance 0.004 (0.45 %):
HMW84's parameters reproduce seawater-type isopiestic data to about this.
"""

import pytest

WATER = 1 - 0.035165
SEAWATER = {
    "Na": (0.4689674 - 0.0024) / WATER,
    "K": 0.0102077 / WATER,
    "Mg": 0.0528171 / WATER,
    "Ca": (0.0102821 + 0.0000907) / WATER,
    "Cl": (0.5458696 + 0.0008421) / WATER,
    "SO4": 0.0282352 / WATER,
}


def _balanced(comp):
    c = dict(comp)
    c["Na"] = c["Cl"] + 2 * c["SO4"] - c["K"] - 2 * c["Mg"] - 2 * c["Ca"]
    return c


@pytest.mark.validation
def test_seawater_osmotic_coefficient(model):
    r = model.activity(_balanced(SEAWATER), 25.0)
    assert r.osmotic == pytest.approx(0.9014, abs=0.004)
    # water activity of S = 35 seawater at 25 °C is 0.9813 (same source, from memory)
    assert r.water_activity == pytest.approx(0.9813, abs=0.0003)
