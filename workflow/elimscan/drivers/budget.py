"""A gradient budget for one path: the engine handed to a path's stages counts and stops its gradients.

``GradientBudget`` holds the limit and the stage a path is in (complex relaxations, driven path, saddle search
and its checks, fallbacks); ``metered(engine)`` gives the stages an engine whose calculators check the budget
before each energy+gradient, so every stage (Hessians and a CI-NEB included) stops at the limit, not after it.
With a ``report`` callback the budget also tells, at each stage and every ``REPORT_INTERVAL_S`` within one,
the gradients and seconds of the stage and of the path so far, so a slow path shows while it runs; without a
limit it only reports, which is how the stages outside the paths (a substrate's conformer search, dihedral scans
and Hessian, a base's relaxation and Hessian) show theirs (``scope`` names the whole: path, substrate, base).
The stop is ``BudgetSpent``, an ``Exception`` outside elimscan's error tree on purpose: no handler for known
failures catches it, only ``paths.compute_path``, which reports the path as unfinished. No file I/O.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable

from ase.calculators.calculator import Calculator, all_changes

from elimscan.engines.contract import geometry_snapshot

#: names of the stages of one path, as the gradient-budget flag and the progress report name them
STAGE_COMPLEX, STAGE_PATH, STAGE_SADDLE = "complex relaxations", "driven path", "saddle search from the path"
STAGE_BASE_H, STAGE_END, STAGE_NEB = "base-H scan fallback", "path end relaxation", "CI-NEB fallback"
#: seconds between two progress reports within one stage of a path (a report also opens each stage): often enough
#: to see a slow stage while it runs, rare enough for one log line each (common practice for progress output)
REPORT_INTERVAL_S = 30.0


def path_budget(per_atom: float | None, n_atoms: int) -> int | None:
    """Return the gradients one path of an ``n_atoms`` complex may spend at ``per_atom`` (None: no limit)."""
    return None if per_atom is None else max(1, math.ceil(per_atom * n_atoms))


class BudgetSpent(Exception):
    """Raised before the first gradient past a path's budget; ``stage`` names the step that ran long."""

    def __init__(self, stage: str, spent: int, limit: int):
        super().__init__(f"gradient budget of {limit} spent in the {stage} ({spent} gradients)")
        self.stage, self.spent, self.limit = stage, spent, limit


class GradientBudget:
    """Gradients one path may spend (``limit``; None: no limit), counted on the engine's ``stats.misses``."""

    def __init__(self, engine, limit: int | None, report: Callable[[str], None] | None = None,
                 interval_s: float = REPORT_INTERVAL_S, clock: Callable[[], float] = time.monotonic,
                 scope: str = "path"):
        self.engine, self.limit, self.scope = engine, limit, scope
        self.stage = "start"
        self._start = engine.stats.misses
        self.by_stage: dict[str, int] = {}
        self._stage_start = self._start
        self._report, self._interval_s, self._clock = report, interval_s, clock
        self._opened = self._stage_opened = self._last_report = clock()

    @property
    def spent(self) -> int:
        """Return the gradients spent since the budget was opened."""
        return self.engine.stats.misses - self._start

    def enter(self, stage: str) -> None:
        """Start counting a new stage (the previous one's gradients go to ``by_stage``) and report it."""
        self._close_stage()
        self.stage = stage
        self._stage_opened = self._clock()
        self._tell(opening=True)

    def _path_text(self, now: float) -> str:
        """Return the gradients (of the limit) and seconds of the whole scope (the path) so far, in words."""
        limit = "" if self.limit is None else f" of {self.limit}"
        return f"{self.scope} {self.spent}{limit} gradients, {now - self._opened:.0f} s"

    def _tell(self, opening: bool = False) -> None:
        """Report the current stage's gradients and seconds and the path's (nothing without a report callback)."""
        if self._report is None:
            return
        now = self._last_report = self._clock()
        if opening:
            self._report(f"{self.stage} ({self._path_text(now)} so far)")
        else:
            here = self.engine.stats.misses - self._stage_start
            self._report(f"{self.stage}: {here} gradients, {now - self._stage_opened:.0f} s ({self._path_text(now)})")

    def _close_stage(self) -> None:
        """Add the gradients since the last stage change to the current stage's count."""
        now = self.engine.stats.misses
        if now > self._stage_start:
            self.by_stage[self.stage] = self.by_stage.get(self.stage, 0) + now - self._stage_start
        self._stage_start = now

    def stage_counts(self) -> dict[str, int]:
        """Return gradients per stage so far (stage name -> count)."""
        self._close_stage()
        return dict(self.by_stage)

    def check(self) -> None:
        """Raise ``BudgetSpent`` when the budget is used up (the next gradient would exceed it); report the stage
        when ``REPORT_INTERVAL_S`` passed since the last report."""
        if self.limit is not None and self.spent >= self.limit:
            raise BudgetSpent(self.stage, self.spent, self.limit)
        if self._report is not None and self._clock() - self._last_report >= self._interval_s:
            self._tell()

    def metered(self, engine):
        """Return ``engine`` itself without a limit or report, else an engine whose calculators check this budget."""
        return engine if self.limit is None and self._report is None else _MeteredEngine(engine, self)


class _MeteredEngine:
    """An engine that hands out calculators checking a gradient budget before each calculation."""

    def __init__(self, engine, budget: GradientBudget):
        self._engine, self._budget = engine, budget

    @property
    def label(self) -> str:
        """Return the wrapped engine's label."""
        return self._engine.label

    @property
    def stats(self):
        """Return the wrapped engine's cache statistics (the budget counts its misses)."""
        return self._engine.stats

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Return the wrapped engine's calculator behind a budget check (energy in eV, forces in eV/Å)."""
        return _MeteredCalculator(self._engine.calculator(charge, multiplicity, name=name), self._budget)

    def single_point(self, atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure"):
        """Return the wrapped engine's single point (hartree, hartree/bohr) after a budget check."""
        self._budget.check()
        return self._engine.single_point(atoms, charge, multiplicity, name=name)


class _MeteredCalculator(Calculator):
    """An ASE calculator that checks a budget, then lets the wrapped calculator (kept for its series) compute."""

    def __init__(self, inner: Calculator, budget: GradientBudget):
        super().__init__()
        self._inner, self._budget = inner, budget
        self.implemented_properties = list(inner.implemented_properties)

    def check_state(self, atoms, tol: float = 1e-15) -> list[str]:
        """Return the wrapped calculator's view of what changed since the last calculation."""
        return self._inner.check_state(atoms, tol)

    def calculate(self, atoms=None, properties=None, system_changes=all_changes) -> None:
        self._budget.check()
        if atoms is not None:
            self.atoms = geometry_snapshot(atoms)
        self._inner.calculate(atoms, properties or ["energy"], system_changes)
        self.results = dict(self._inner.results)
