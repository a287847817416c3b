"""A plug-in engine as its author would write it: ASE's Lennard-Jones pair potential behind elimscan's Engine
contract (``elimscan.engines.contract``). Not a chemistry model: it shows what a backend must provide.

Use: ``elimscan run config.yaml --out DIR --engine plugin_engine:make`` (this folder on PYTHONPATH).
"""

from ase.calculators.lj import LennardJones

from elimscan.engines.contract import CacheStats, SinglePoint
from elimscan.units import ANGSTROM_PER_BOHR, EV_PER_HARTREE


class PairEngine:
    """Lennard-Jones energies and forces for any elements; counts every computed geometry."""

    label = "Lennard-Jones pairs (plug-in example, tests only)"

    def __init__(self, method):
        self.stats = CacheStats()

    def calculator(self, charge=0, multiplicity=1, name="structure"):
        """Return an ASE calculator (eV, eV/Å) that counts its calculations in ``stats.misses``."""
        engine = self

        class Counting(LennardJones):
            def calculate(self, *args, **kwargs):
                engine.stats.misses += 1
                super().calculate(*args, **kwargs)

        return Counting(sigma=2.0, epsilon=0.01, rc=6.0)

    def single_point(self, atoms, charge=0, multiplicity=1, name="structure"):
        """Return energy (hartree) and gradient (hartree/bohr) of one geometry."""
        work = atoms.copy()
        work.calc = self.calculator(charge, multiplicity, name)
        gradient = -work.get_forces() / EV_PER_HARTREE * ANGSTROM_PER_BOHR
        return SinglePoint(work.get_potential_energy() / EV_PER_HARTREE, gradient, 300.0)


def make(method):
    """Return a PairEngine (the factory named on the command line)."""
    return PairEngine(method)


def incomplete(method):
    """Return an object that lacks the contract's single_point (for the refusal test)."""
    return type("Half", (), {"label": "half", "stats": CacheStats(), "calculator": lambda self, *a: None})()
