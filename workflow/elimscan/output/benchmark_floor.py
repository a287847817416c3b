"""The benchmark page's section on whether the electronic barriers lie above zero (pure: returns text).

From ``analysis.barrierfloor.BarrierFloor``: the count above zero, and each path at or below zero, lowest first.
"""

from __future__ import annotations

from elimscan.analysis.barrierfloor import BarrierFloor

#: how many paths at or below zero the page lists by name (the rest are counted)
LISTED = 12


def floor_section(floor: BarrierFloor) -> list[str]:
    """Return the lines of the section on dE above zero (none when no finished job has a counted path)."""
    if floor.n_paths == 0:
        return []
    lines = ["", "## Electronic barriers above zero", "",
             f"Issue 18's goal, dE above zero everywhere: of the {floor.n_paths} counted paths (E2 approaches and SN2; "
             f"a path that is no barrier is left out) of the {floor.n_jobs} finished job(s) on this page, test and "
             f"calibration cases alike, **{floor.n_above_zero} lie above zero** (GFN2-xTB dE of the top above the "
             "substrate's global minimum plus the free base, kcal/mol) and "
             f"**{len(floor.at_or_below_zero)} at or below zero**" + (":" if floor.at_or_below_zero else ".")]
    if floor.at_or_below_zero:
        lines += ["", "| case slot | seed | path | dE (kcal/mol) |", "|---|---|---|---|"]
        lines += [f"| {b.slot} | {b.seed} | {b.path} | {b.barrier_kcal_mol:.2f} |"
                  for b in floor.at_or_below_zero[:LISTED]]
        if len(floor.at_or_below_zero) > LISTED:
            lines += ["", f"… and {len(floor.at_or_below_zero) - LISTED} more, the highest "
                      f"{floor.at_or_below_zero[-1].barrier_kcal_mol:.2f} kcal/mol."]
    return lines
