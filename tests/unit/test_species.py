import pytest

from phasekit.chemistry.species import SPECIES, formula_mass, molar_mass, parse_species
from phasekit.errors import InputError


@pytest.mark.parametrize(
    "text,name",
    [("Na", "Na"), ("Na+", "Na"), ("Mg2+", "Mg"), ("Mg+2", "Mg"), ("Mg++", "Mg"), ("SO4^2-", "SO4"),
     ("SO4--", "SO4"), ("SO4-2", "SO4"), ("SO42-", "SO4"), ("Cl-", "Cl"), ("NO3-", "NO3"), ("so4", "SO4")],
)
def test_parse_accepts_written_forms(text, name):
    assert parse_species(text) == name


@pytest.mark.parametrize("text", ["Xx", "Na2+", "SO4+", "Cl+-", "", "H2O"])
def test_parse_rejects_unknown_or_wrong_charge(text):
    with pytest.raises(InputError) as err:
        parse_species(text)
    assert "species" in str(err.value)


def test_molar_masses_from_standard_atomic_weights():
    # IUPAC standard atomic weights: Na 22.98977, Cl 35.45, S 32.06, O 15.999 (common practice)
    assert molar_mass("Na") == pytest.approx(22.98977, abs=1e-4)
    assert molar_mass("SO4--") == pytest.approx(32.06 + 4 * 15.999, abs=2e-3)
    assert formula_mass("KMgCl3(H2O)6") == pytest.approx(277.85, abs=0.02)
    assert set(SPECIES) >= {"Na", "K", "Mg", "Ca", "Li", "Cl", "SO4", "NO3"}
