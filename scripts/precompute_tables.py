"""Rewrite phasekit/thermo/precomputed.json: the A_phi and ln J tables shipped with the package
(see phasekit.thermo.tables). Run after changing a grid, a formula or the iapws package."""

from phasekit.thermo import tables

if __name__ == "__main__":
    tables.write()
    print(f"wrote {tables.PATH}")
