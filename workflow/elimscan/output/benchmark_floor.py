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
    left_out = (f" {floor.n_left_out} more path(s) were left out as no barrier (they did not reach their products, "
                "or their gradient budget stopped them): a base that falls onto the substrate without a saddle, one "
                "way this goal fails, shows among them, not in the count above." if floor.n_left_out else "")
    lines = ["", "## Electronic barriers above zero", "",
             f"Issue 18's goal, dE above zero everywhere: of the {floor.n_paths} counted paths (E2 approaches and SN2) "
             f"of the {floor.n_jobs} finished job(s) on this page, test and calibration cases alike, "
             f"**{floor.n_above_zero} lie above zero** (GFN2-xTB dE of the top above the substrate's global minimum "
             "plus the free base, kcal/mol: measured from separated reactants, so an onium salt and an alkoxide can "
             "lie below zero by their ion pair's attraction alone) and "
             f"**{len(floor.at_or_below_zero)} at or below zero**." + left_out]
    if floor.at_or_below_zero:
        lines += ["", "| case slot | seed | path | dE (kcal/mol) |", "|---|---|---|---|"]
        lines += [f"| {b.slot} | {b.seed} | {b.path} | {b.barrier_kcal_mol:.2f} |"
                  for b in floor.at_or_below_zero[:LISTED]]
        if len(floor.at_or_below_zero) > LISTED:
            lines += ["", f"… and {len(floor.at_or_below_zero) - LISTED} more, the highest "
                      f"{floor.at_or_below_zero[-1].barrier_kcal_mol:.2f} kcal/mol."]
    return lines
