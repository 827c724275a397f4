"""Data table of common gases: molar mass, diffusion volume, collision diameter.

Diffusion volumes (sum of atomic diffusion volumes, dimensionless numbers that carry
the units cm^3/mol in the original) are those of Fuller, Ensley & Giddings (1969), the
revision of Fuller, Schettler & Giddings (1966) that Poling, Prausnitz & O'Connell
tabulate in Table 11-1 [2]. Where the table gives no molecular value the volume is
summed from the atomic increments of the same table (C 15.9, H 2.31, O 6.11,
N 4.54, S 22.9, aromatic ring -18.3). Collision diameters are Lennard-Jones sigma
values from Poling et al. Appendix B [2]; they are used only for the gas-kinetic mean
free path (Knudsen number). ALL diffusion volumes and collision diameters below are
recalled from memory (values from memory) and should be checked against the printed
table before being relied on beyond screening; molar masses are IUPAC standard
atomic weights summed.

The original 1966 paper [1] lists slightly different volumes (e.g. air 20.1, H2
7.07, C 16.5, H 1.98); mixing the two sets is a mistake, so only the 1969 set is used.

References
----------
1. Fuller, E. N., Schettler, P. D., Giddings, J. C. (1966). A new method for
   prediction of binary gas-phase diffusion coefficients. Ind. Eng. Chem. 58(5),
   18-27.
2. Poling, B. E., Prausnitz, J. M., O'Connell, J. P. (2001). The Properties of Gases
   and Liquids, 5th ed. McGraw-Hill. Table 11-1 (diffusion volumes, from Fuller,
   Ensley & Giddings, J. Phys. Chem. 73, 3679 (1969)); Appendix B (Lennard-Jones
   sigma).
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import PhysicsInputError

ATOMIC_DIFFUSION_VOLUMES = {  # Poling et al. Table 11-1 (values from memory)
    "C": 15.9, "H": 2.31, "O": 6.11, "N": 4.54, "F": 14.7, "Cl": 21.0, "Br": 21.9,
    "I": 29.8, "S": 22.9,
}
RING_DIFFUSION_VOLUME = -18.3  # aromatic or heterocyclic ring, same table


@dataclass(frozen=True)
class Species:
    """One gas: molar_mass [kg/mol], diffusion_volume [-] (Fuller sum of volumes),
    collision_diameter [m] (Lennard-Jones sigma) or None when not tabulated here."""

    name: str
    formula: str
    molar_mass: float
    diffusion_volume: float
    collision_diameter: float | None
    note: str = ""


def diffusion_volume_from_atoms(atoms: dict[str, int], rings: int = 0) -> float:
    """Sum of atomic diffusion volumes [-] for a molecule given as {"C": 7, "H": 8},
    plus ``rings`` aromatic/heterocyclic rings (Poling et al. Table 11-1)."""
    total = RING_DIFFUSION_VOLUME * rings
    for symbol, count in atoms.items():
        if symbol not in ATOMIC_DIFFUSION_VOLUMES:
            raise PhysicsInputError(
                "atoms", symbol,
                f"no atomic diffusion volume; choose from {', '.join(ATOMIC_DIFFUSION_VOLUMES)}",
            )
        total += ATOMIC_DIFFUSION_VOLUMES[symbol] * count
    return total


_A = 1e-10  # one angstrom [m]
_SUMMED = "diffusion volume summed from atomic increments"

SPECIES: dict[str, Species] = {
    s.name: s
    for s in (
        Species("H2", "H2", 2.01588e-3, 6.12, 2.827 * _A),
        Species("He", "He", 4.002602e-3, 2.67, 2.551 * _A),
        Species("Ne", "Ne", 20.1797e-3, 5.98, 2.820 * _A),
        Species("Ar", "Ar", 39.948e-3, 16.2, 3.542 * _A),
        Species("N2", "N2", 28.0134e-3, 18.5, 3.798 * _A),
        Species("O2", "O2", 31.9988e-3, 16.3, 3.467 * _A),
        Species("air", "air", 28.9647e-3, 19.7, 3.711 * _A),
        Species("CO", "CO", 28.0101e-3, 18.0, 3.690 * _A),
        Species("CO2", "CO2", 44.0095e-3, 26.9, 3.941 * _A),
        Species("N2O", "N2O", 44.0128e-3, 35.9, 3.828 * _A),
        Species("H2O", "H2O", 18.01528e-3, 13.1, 2.641 * _A),
        Species("NH3", "NH3", 17.03052e-3, 20.7, 2.900 * _A),
        Species("SO2", "SO2", 64.0638e-3, 41.8, 4.112 * _A),
        Species("H2S", "H2S", 34.0809e-3, 27.52, 3.623 * _A, _SUMMED),
        Species("Cl2", "Cl2", 70.906e-3, 38.4, 4.217 * _A),
        Species("CH4", "CH4", 16.0425e-3, 25.14, 3.758 * _A, _SUMMED),
        Species("C2H4", "C2H4", 28.0532e-3, 41.04, 4.163 * _A, _SUMMED),
        Species("C2H6", "C2H6", 30.069e-3, 45.66, 4.443 * _A, _SUMMED),
        Species("C3H6", "C3H6", 42.0797e-3, 61.56, 4.678 * _A, _SUMMED),
        Species("C3H8", "C3H8", 44.0956e-3, 66.18, 5.118 * _A, _SUMMED),
        Species("n-C4H10", "C4H10", 58.1222e-3, 86.7, 4.687 * _A, _SUMMED),
        Species("methanol", "CH4O", 32.0419e-3, 31.25, 3.626 * _A, _SUMMED),
        Species("ethanol", "C2H6O", 46.0684e-3, 51.77, 4.530 * _A, _SUMMED),
        Species("benzene", "C6H6", 78.1118e-3, 90.96, 5.349 * _A, _SUMMED + ", one ring"),
        Species("toluene", "C7H8", 92.1384e-3, 111.48, None, _SUMMED + ", one ring; no sigma"),
        Species("ethylbenzene", "C8H10", 106.165e-3, 132.0, None, _SUMMED + ", one ring; no sigma"),
    )
}


def species(name: str) -> Species:
    """Look up a species by its table name (case-sensitive formula or lower-case name)."""
    try:
        return SPECIES[name]
    except KeyError:
        raise PhysicsInputError(
            "species", name, f"unknown species; choose one of {', '.join(SPECIES)}"
        ) from None
