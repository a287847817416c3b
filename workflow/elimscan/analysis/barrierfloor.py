"""Whether the counted electronic barriers of a set of finished jobs lie above zero (issue 18's goal: "dE above
zero everywhere").

A barrier here is a job record's ``barrier_kcal_mol`` (GFN2-xTB dE of the path's top above the substrate's global
minimum plus the free base, same solvent): below zero means the base and substrate fall into the saddle from
separated reactants, the sign of a base too reactive for its model. Only counted paths are read: an E2 approach or
the SN2 path whose record says it is no barrier (it did not reach its products, or its gradient budget stopped it)
is not a barrier and is left out, as in every share (``benchmark_scoring.e2_paths`` / ``sn2_path``). A job serving
several case slots is read once. Pure: reads record dicts, no files.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from elimscan.analysis.benchmark_scoring import e2_paths, sn2_left_out, sn2_path


@dataclass(frozen=True)
class BarrierAtOrBelowZero:
    """One counted path whose electronic barrier is at or below zero: its case slot, seed, path and dE (kcal/mol)."""

    slot: str
    seed: int
    path: str
    barrier_kcal_mol: float


@dataclass(frozen=True)
class BarrierFloor:
    """How many counted paths of the finished jobs lie above zero at dE, and those that do not (lowest first)."""

    n_jobs: int
    n_paths: int
    at_or_below_zero: tuple[BarrierAtOrBelowZero, ...]
    #: paths left out as no barrier (they did not reach their products, or their gradient budget stopped them)
    n_left_out: int = 0

    @property
    def n_above_zero(self) -> int:
        """Return how many counted paths have dE above zero."""
        return self.n_paths - len(self.at_or_below_zero)


def barrier_floor(records: Mapping[str, Mapping[int, Mapping]]) -> BarrierFloor:
    """Return the counted paths' dE (kcal/mol) against zero over finished job records by case slot and seed (a job
    serving several slots, known by its ``job_key``, is read once)."""
    seen: set[object] = set()
    n_paths, n_left_out, low = 0, 0, []
    for slot, by_seed in sorted(records.items()):
        for seed, job in sorted(by_seed.items()):
            key = job.get("job_key") or id(job)
            if key in seen:
                continue
            seen.add(key)
            paths, left_out = e2_paths(job, "dE")
            n_left_out += len(left_out)
            sn2 = sn2_path(job, "dE")
            n_left_out += sn2_left_out(job) is not None
            for p in [*paths, *([sn2] if sn2 is not None else [])]:
                n_paths += 1
                if p.barrier_kcal_mol <= 0.0:
                    name = "SN2" if p.class_id == "substitution" else f"{p.class_id} {p.approach} to {p.product_smiles}"
                    low.append(BarrierAtOrBelowZero(slot, seed, name, p.barrier_kcal_mol))
    return BarrierFloor(n_jobs=len(seen), n_paths=n_paths,
                        at_or_below_zero=tuple(sorted(low, key=lambda b: b.barrier_kcal_mol)), n_left_out=n_left_out)
