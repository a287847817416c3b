"""The benchmark's calibration set scored as errors (pure): no 'right' here, only how far off each number is.

- rate: the measured k2 (1/(M s)) becomes ΔG‡ by Eyring's equation at the case's temperature (1 M standard
  state, transmission coefficient 1; constants CODATA 2018, ``units``). The computed barrier of the channel
  is the Boltzmann sum over its paths, -RT ln sum_i g_i exp(-B_i/RT) (E2: every path that reached its
  alkene, g the class degeneracy; SN2: its one path), at the dG level (quasi-RRHO free barriers, 1 M) and
  at the dE level (electronic; an electronic barrier set against a measured free barrier, labelled so).
- isotope effect: the job's k_H/k_D with deuterium on every hydrogen of the named beta carbon (else on the
  moving hydrogen), from the class on that carbon with the lowest dE barrier; harmonic Bigeleisen-Mayer and
  with Wigner's tunnelling correction; error in percent of the measured value.
- Hammett: rho fitted (``rule.hammett_fit``) to the members' E2 channel barriers at each level; error = rho
  minus the cited rho.

Every estimate is given per seed, as the mean over seeds and as the spread (max - min) over seeds.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from elimscan.analysis.benchmark_cases import CalibrationCase, HammettCase, IsotopeCase, RateCase, member_slot
from elimscan.analysis.benchmark_scoring import DERIVED_LEVELS, e2_paths, path_left_out, sn2_path
from elimscan.analysis.rule import hammett_fit, summed_barrier_kcal_mol
from elimscan.units import AVOGADRO_PER_MOL_2018, BOLTZMANN_J_PER_K_2018, J_PER_KCAL, PLANCK_J_S_2018

#: standard concentration of the measured second-order rate constants (mol/L)
STANDARD_CONCENTRATION_M = 1.0
#: levels at which the calibration compares barriers (DFT//GFN2 barriers are relative unless asked otherwise)
CALIBRATION_LEVELS = ("dG", "dE")
#: the DFT levels of a rate, where a job's DFT barriers are absolute (dft.absolute_barriers: above the DFT free
#: substrate + free base): the DFT electronic barrier, and the DFT free barrier, that barrier plus the GFN2-xTB
#: quasi-RRHO term of the same saddle (its free minus its electronic barrier; common practice for DFT single points
#: on xTB geometries). The free one is what validation/model-freeze.yaml chooses the DFT level on.
DFT_LEVEL, DFT_FREE_LEVEL = "DFT//GFN2", "dG(DFT//GFN2)"
#: the field each path of a job copy gets for DFT_FREE_LEVEL (kcal/mol)
DFT_FREE_FIELD = DERIVED_LEVELS[DFT_FREE_LEVEL]
#: words in a job's dft.zero_kind that say its DFT barriers are absolute
ABSOLUTE_DFT_ZERO = "free substrate + free base"


def eyring_free_barrier_kcal_mol(k2_per_M_per_s: float, temperature_K: float) -> float:
    """Return ΔG‡ (kcal/mol, 1 M standard state) of a second-order rate constant k2 (1/(M s)) at temperature_K (K).

    Eyring: k2 = (k_B T / h) (1/c0) exp(-ΔG‡ / RT), so ΔG‡ = RT ln(k_B T / (h k2 c0)), with k_B, h and
    N_A from CODATA 2018 and R = k_B N_A.
    """
    gas_constant_kcal_mol_K = BOLTZMANN_J_PER_K_2018 * AVOGADRO_PER_MOL_2018 / J_PER_KCAL
    frequency_per_s = BOLTZMANN_J_PER_K_2018 * temperature_K / PLANCK_J_S_2018
    return gas_constant_kcal_mol_K * temperature_K * math.log(frequency_per_s / (k2_per_M_per_s * STANDARD_CONCENTRATION_M))


def has_absolute_dft(job: Mapping) -> bool:
    """Return True when a job's DFT barriers lie above its DFT free substrate + free base (absolute)."""
    return ABSOLUTE_DFT_ZERO in ((job.get("dft") or {}).get("zero_kind") or "")


def with_dft_free_barriers(job: Mapping) -> dict | None:
    """Return a copy of a job record whose paths carry their DFT free barrier (kcal/mol) as ``DFT_FREE_FIELD``:
    the absolute DFT electronic barrier plus the path's GFN2-xTB free minus electronic barrier; None when the job's
    DFT barriers are not absolute. A path without all three numbers gets none."""
    if not has_absolute_dft(job):
        return None

    def free(block: Mapping) -> dict:
        parts = (block.get("barrier_dft_kcal_mol"), block.get("barrier_free_energy_kcal_mol"),
                 block.get("barrier_kcal_mol"))
        value = None if any(v is None for v in parts) else parts[0] + parts[1] - parts[2]
        return {**block, DFT_FREE_FIELD: value}

    copy = dict(job)
    copy["beta_hydrogens"] = [{**beta, **{a: free(beta[a]) for a in ("anti", "syn") if beta.get(a) is not None}}
                              for beta in job.get("beta_hydrogens") or ()]
    if job.get("substitution"):
        copy["substitution"] = free(job["substitution"])
    return copy


def channel_barrier_kcal_mol(job: Mapping, channel: str, level: str, temperature_K: float) -> float | None:
    """Return the effective barrier of a job's E2 or SN2 channel at a level (kcal/mol), or None without one.

    At the DFT levels (``DFT_LEVEL``, ``DFT_FREE_LEVEL``) only jobs whose DFT barriers are absolute count."""
    if job.get("status") != "ok":
        return None
    if level in (DFT_LEVEL, DFT_FREE_LEVEL) and not has_absolute_dft(job):
        return None
    if level == DFT_FREE_LEVEL:  # only this level reads the derived field: copy the record for it alone
        job = with_dft_free_barriers(job)
    if channel == "SN2":
        path = sn2_path(job, level)
        return None if path is None else path.barrier_kcal_mol
    paths = e2_paths(job, level)[0]
    if not paths:
        return None
    return summed_barrier_kcal_mol([(p.barrier_kcal_mol, p.degeneracy) for p in paths], temperature_K)


def isotope_effect(job: Mapping, beta_carbon_indices: Sequence[int]) -> tuple[float, float] | None:
    """Return (k_H/k_D harmonic, with Wigner's correction) of the class on the named beta carbon(s), or None.

    ``beta_carbon_indices`` are 0-based atom indices (RDKit's, as the case file's SMARTS matches them); job records
    name them ``beta_carbon_index0`` (``beta_carbon_index`` in documents before result schema 0.7.1).
    """
    if job.get("status") != "ok":
        return None
    found = []
    for beta in job.get("beta_hydrogens") or ():
        carbon = beta.get("beta_carbon_index0", beta.get("beta_carbon_index"))  # 0-based; the older name before 0.7.1
        if carbon not in beta_carbon_indices:
            continue
        counted = {a: beta[a]["barrier_kcal_mol"] for a in ("anti", "syn") if beta[a].get("path_status") == "ok"
                   and beta[a].get("barrier_kcal_mol") is not None and path_left_out(beta[a]) is None}
        # an effect computed on a path that is no barrier (it did not reach its products) decides nothing
        effects = [e for e in beta.get("isotope_effects") or () if e.get("approach", "anti") in counted]
        if not effects:
            continue
        whole = [e for e in effects if len(e.get("deuterated_indices0", e.get("deuterated_indices")) or ()) > 1] \
            or effects
        found.append((min(counted.values()), whole[0]))
    if not found:
        return None
    effect = min(found, key=lambda item: item[0])[1]
    return effect["kh_kd"], effect["kh_kd_wigner"]


@dataclass(frozen=True)
class Estimate:
    """One computed estimate of a calibration value over the seeds, and its error against the measurement."""

    label: str
    per_seed: tuple[float | None, ...]
    mean: float | None
    spread: float | None
    #: mean - measured (in the value's unit), or in percent of the measured value for isotope effects
    error: float | None


@dataclass(frozen=True)
class CalibrationScore:
    """One calibration case: what was measured (value and unit) and the computed estimates."""

    case: CalibrationCase
    quantity: str
    unit: str
    measured: float
    estimates: tuple[Estimate, ...]
    error_unit: str


def _estimate(label: str, values: Sequence[float | None], measured: float, relative: bool = False) -> Estimate:
    """Return an Estimate from per-seed values: mean, spread (max - min) and error (absolute or percent)."""
    known = [v for v in values if v is not None]
    mean = sum(known) / len(known) if known else None
    spread = max(known) - min(known) if len(known) > 1 else None
    error = None if mean is None else (100.0 * (mean / measured - 1.0) if relative else mean - measured)
    return Estimate(label, tuple(values), mean, spread, error)


def score_calibration(case: CalibrationCase, jobs: Mapping[str, Mapping[int, Mapping]],
                      seeds: Sequence[int]) -> CalibrationScore:
    """Return a calibration case's errors from its job records by slot and seed (see ``benchmark_cases.case_slots``)."""
    temperature = case.temperature_K
    if isinstance(case, RateCase):
        measured = eyring_free_barrier_kcal_mol(case.k2_per_M_per_s, temperature)
        mine = jobs.get(case.id, {})
        levels = CALIBRATION_LEVELS + ((DFT_LEVEL, DFT_FREE_LEVEL) if any(has_absolute_dft(j) for j in mine.values())
                                       else ())
        estimates = tuple(_estimate(f"{case.channel} {level}",
                                    [channel_barrier_kcal_mol(mine[s], case.channel, level, temperature) if s in mine
                                     else None for s in seeds], measured) for level in levels)
        return CalibrationScore(case, f"ΔG‡ {case.channel} from k2 = {case.k2_per_M_per_s:.3g} /(M s) (Eyring, 1 M)",
                                "kcal/mol", measured, estimates, "kcal/mol")
    if isinstance(case, IsotopeCase):
        mine = jobs.get(case.id, {})
        pairs = [isotope_effect(mine[s], case.beta_carbon_indices) if s in mine else None for s in seeds]
        estimates = (_estimate("harmonic", [p[0] if p else None for p in pairs], case.kh_kd, relative=True),
                     _estimate("with Wigner tunnelling", [p[1] if p else None for p in pairs], case.kh_kd, relative=True))
        measured_on = f" (measured on {case.measured_on})" if case.measured_on else ""
        return CalibrationScore(case, f"k_H/k_D, D on {case.beta_carbon_smarts}{measured_on}", "", case.kh_kd,
                                estimates, "%")
    assert isinstance(case, HammettCase)
    estimates = []
    for level in CALIBRATION_LEVELS:
        rhos = []
        for seed in seeds:
            points = []
            for member in case.members:
                job = jobs.get(member_slot(case.id, member.substrate.name), {}).get(seed)
                barrier = None if job is None else channel_barrier_kcal_mol(job, "E2", level, temperature)
                if barrier is not None:
                    points.append((member.sigma, barrier))
            # every member or none: seeds fitted to different members would be averaged as one rho
            usable = len(points) == len(case.members) >= 3 and len({sigma for sigma, _ in points}) >= 2
            rhos.append(hammett_fit([p[0] for p in points], [p[1] for p in points], temperature).rho if usable else None)
        estimates.append(_estimate(f"rho {level}", rhos, case.rho))
    return CalibrationScore(case, f"Hammett rho ({len(case.members)} substituents)", "", case.rho, tuple(estimates), "")
