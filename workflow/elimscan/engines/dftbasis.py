"""Basis sets and composite levels of the DFT tier: what PySCF is handed for each ``dft.basis`` and ``dft.functional``.

The def2 sets are PySCF's own (by name). vDZP, the basis of the ωB97X-3c composite, is not in PySCF 2.14's
library: it comes from the basis-set-exchange package (BSE 0.12 lists it as 'Grimme vDZP', version 1, "Data
from supporting information" of Müller, Hansen & Grimme, J. Chem. Phys. 158, 014103 (2023)). BSE carries its
effective core potentials too (scalar ECPs on every element from B on: 2 core electrons for B-Mg, 10 for Al-Ar,
28 for Br; H to Be carry none, read from BSE 0.12's data): PySCF reads both through its
own BSE converter when a basis or ECP name is not in its library (``pyscf.gto.basis.load`` / ``load_ecp``).

The ωB97X-3c composite (Müller, Hansen & Grimme 2023, DOI 10.1063/5.0133026) is three parts, none of which may be
swapped:

* the exchange-correlation functional: ωB97X-V (Mardirossian & Head-Gordon, Phys. Chem. Chem. Phys. 2014, 16,
  9904) WITHOUT its VV10 non-local correlation. In PySCF that is ``xc = 'wb97x-v'`` with ``nlc = False``: PySCF
  2.14's own table of composites (``pyscf.scf.dispersion._white_list['wb97x-3c']``) says the same
  (``('wb97x-v', False, 'd4:wb97x-3c')``), and the authors' setup script for ORCA (github.com/grimme-lab/wB97X-3c,
  src/orca4wb97x3c.f90) writes ORCA's 'WB97X-D4' keyword, ωB97X-V's exchange and correlation without VV10;
* D4 dispersion with the composite's own refitted rational-damping parameters s6 = 1.0, s8 = 0.0, a1 = 0.2464,
  a2 = 4.737 and the three-body term (s9 = 1.0): the dftd4 parameter table (dftd4/dftd4, src/dftd4/param.f90,
  case p_wb97x_3c in the D4 + ATM table, cited there to 10.1063/5.0133026) and the same five numbers in the
  authors' ORCA setup script (D4A1 0.2464, D4A2 4.737, D4S6 1.00, D4S8 0.00, D4S9 1.00). pyscf-dispersion's D4
  library takes them by the method name 'wb97x-3c' (``disp = 'd4:wb97x-3c'``);
* the vDZP basis with its ECPs (above). No geometric counterpoise (gCP) term: the authors' script writes none.

No file I/O here beyond basis-set-exchange reading its own package data.
"""

from __future__ import annotations

import importlib

from ase.data import atomic_numbers

from elimscan.errors import DftUnavailableError

#: the basis-set-exchange name of vDZP (BSE 0.12: 'Grimme vDZP', basename 'vdzp')
VDZP_BSE_NAME = "Grimme vDZP"
#: our basis keys whose data come from basis-set-exchange, by their BSE names
BSE_BASES = {"vdzp": VDZP_BSE_NAME}
#: auxiliary (RI) basis per basis key where PySCF cannot choose one by name: vDZP has no fitting set of its own;
#: def2-universal-jkfit (Weigend, Phys. Chem. Chem. Phys. 2006, 8, 1057) is PySCF's choice for every def2 set and
#: the authors' ORCA script fits the Coulomb term with def2/J too (exchange there by COSX; here RI as for def2)
AUXILIARY_BASES = {"vdzp": "def2-universal-jkfit"}
#: composite levels: functional key -> (PySCF xc, PySCF nlc, PySCF disp), each part's source in the docstring
COMPOSITE_SETUP: dict[str, tuple[str, bool, str]] = {"wb97x-3c": ("wb97x-v", False, "d4:wb97x-3c")}
#: what to install when basis-set-exchange is missing
BSE_HINT = "pip install 'elimscan[dft]' (basis-set-exchange carries vDZP and its ECPs)"


def missing_basis_data(basis: str) -> str | None:
    """Return why ``basis`` cannot be built here (basis-set-exchange missing for a BSE basis), else None."""
    if basis not in BSE_BASES:
        return None
    try:
        importlib.import_module("basis_set_exchange")
    except ImportError as err:
        return f"DFT tier skipped: basis-set-exchange cannot be imported ({err}); install it with {BSE_HINT}"
    return None


def ecp_elements(basis: str, symbols: list[str]) -> list[str]:
    """Return the element symbols of ``symbols`` (sorted, unique) that carry an ECP in ``basis`` (BSE bases only)."""
    if basis not in BSE_BASES:
        return []
    try:
        import basis_set_exchange
    except ImportError as err:
        raise DftUnavailableError(f"basis {basis}: basis-set-exchange cannot be imported ({err}); install it with "
                                  f"{BSE_HINT}") from err
    unique = sorted(set(symbols))
    data = basis_set_exchange.get_basis(BSE_BASES[basis], elements=unique)
    by_number = {int(z): block for z, block in data["elements"].items()}
    return [s for s in unique if "ecp_potentials" in by_number.get(atomic_numbers[s], {})]


def pyscf_basis(basis: str, symbols: list[str]) -> tuple[object, dict[str, str] | None]:
    """Return (basis, ecp) as PySCF's ``gto.M`` takes them for our basis key and the molecule's element symbols."""
    if basis not in BSE_BASES:
        return basis, None
    name = BSE_BASES[basis]
    with_ecp = ecp_elements(basis, symbols)
    return name, ({symbol: name for symbol in with_ecp} or None)


def auxiliary_basis(basis: str) -> str | None:
    """Return the auxiliary (RI) basis name for our basis key, None where PySCF chooses it (def2 sets)."""
    return AUXILIARY_BASES.get(basis)


def pyscf_functional(functional: str, dispersion: str) -> tuple[str, bool | None, str | None]:
    """Return PySCF's (xc, nlc, disp) for our functional and dispersion keys (nlc None: PySCF's default)."""
    if functional in COMPOSITE_SETUP:
        return COMPOSITE_SETUP[functional]
    return functional, None, (None if dispersion == "none" else dispersion)
