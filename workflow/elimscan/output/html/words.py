"""The report's fixed prose and the sentences built from a run: caution, "Reading the numbers", method lines."""

from __future__ import annotations

from elimscan.config import SolventConfig
from elimscan.output.basemodelwords import DEFAULT_MODEL_SENTENCE, any_default_model
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL
from elimscan.output.plots.paths import has_barriers
from elimscan.output.tables import job_solvent
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord
from elimscan.solvents import medium_label

CAUTION = ("Computed predictions are not safety data. Strong bases (alkoxides, amides, hydrides) and alkyl halides "
           "and sulfonates are hazardous: corrosive, flammable, toxic, many of them alkylating agents. Plan and run "
           "any experiment under qualified supervision, with a proper risk assessment, and follow your local regulations.")

MEANING = (
    "Unless marked \u0394G\u2021, all energies are GFN2-xTB electronic energies including the implicit-solvent term; "
    "they are not free energies.",
    "An anti (syn) penalty is the lowest energy, above the substrate's global minimum, of any conformer or scan point "
    "with the H\u2013C\u03b2\u2013C\u03b1\u2013X dihedral in the anti (syn) window, in kcal/mol: the conformational price "
    "of putting that hydrogen where the rule needs it. It is not a barrier.",
    "\u201cnot reached\u201d means the geometry was never reached below the scan's energy cap.",
)
#: what the reference benchmark says of GFN2-xTB, written from validation/VALIDATION-fast.md like the README's
#: paragraph (tests/output/test_benchmark_words.py checks both against that page's headline)
BENCHMARK_SAYS = (
    "What the reference benchmark says of this level (validation/VALIDATION-fast.md: fast subset, 5 test cases, "
    "three seeds, 2026-12-05, ethoxide with three ethanol molecules, the lowest of five embeddings): computed right "
    "3/5 (ΔE‡) and 3/5 (ΔG‡), the textbook rule 4/5. GFN2-xTB resolves what conformation decides (a ring where "
    "only one hydrogen can reach anti) but not choices that rest on barrier differences of about 1 kcal/mol: the "
    "seeds' 1-butene shares of 2-bromobutane spread over 33 points (ΔE‡) and 70 (ΔG‡), its ΔG‡ call right on two "
    "seeds of three while the third put 1-butene on top at 80 %; the E2 : SN2 split came out 95–100 % E2 for "
    "2-bromopropane against 79 % measured and, at ΔG‡, 82 % E2 for bromoethane against 1 %. Absolute ΔG‡ lay "
    "6–10 kcal/mol below measured rates. Read a computed call as a hypothesis, never as a prediction to act on.")
#: the last point of "Reading the numbers" when no job of the run has computed barriers
BARRIERS_ABSENT = ("Barriers (base\u2013substrate complexes, E2 paths) and a computed product mix were not computed in "
                   "this run: the product calls below are the geometric rule's, nothing more.")
#: said of a job without computed paths, in its verdict box and its foot
NO_BARRIERS_JOB = "no barriers were computed for this job"
#: the one sentence under a job's isotope-effect table
KIE_SENTENCE = ("Primary kinetic isotope effects k_H/k_D for the deuterium positions named, from the harmonic "
                "frequencies of the free substrate and of the saddle with isotopic masses (Bigeleisen\u2013Mayer), "
                "without and with Wigner\u2019s tunnelling correction: compare them with your own labelling experiments.")
#: what the two words of energy_used mean in the page
ENERGY_WORDS = {"electronic": "electronic barriers \u0394E\u2021", "free": "free-energy barriers \u0394G\u2021 (quasi-RRHO, 1 M)"}

#: the sentence under every substituent-series table
SERIES_SENTENCE = ("Each member's barrier is the lowest E2 barrier of its job (every beta-H class, anti and syn) above its "
                   "own substrate plus the free base; log\u2081\u2080(k/k\u2080) = \u2212(barrier \u2212 barrier of "
                   "k\u2080)/(RT ln 10), transition-state theory with one prefactor for all members, and \u03c1 is the "
                   "least-squares slope of log\u2081\u2080(k/k\u2080) against \u03c3. Compare the sign and size of "
                   "\u03c1 with a measured one; single values carry the method's uncertainty of about 1 kcal/mol.")


def barrier_meaning(temperatures_K: tuple[float, ...]) -> tuple[str, ...]:
    """Return the points of "Reading the numbers" that explain barriers and shares (Boltzmann temperatures in K)."""
    shift = f"{BARRIER_SHIFT_KCAL_MOL:g}"
    temperature = " and ".join(f"{t:g} K" for t in temperatures_K) or "the run's temperature"
    return (
        "Barriers \u0394E\u2021 are GFN2-xTB electronic energy differences in kcal/mol (with the implicit-solvent term), "
        "not free energies \u0394G\u2021: no zero-point, thermal or entropy terms.",
        "All barriers of a job share one zero: the substrate's global minimum plus the relaxed free base, in the same "
        "implicit solvent. \u201cabs.\u201d is a barrier above that zero; \u201crel.\u201d is the same barrier above the "
        "job's lowest barrier.",
        "Absolute GFN2-xTB barriers are typically too low, and because the base\u2013substrate complex is bound they can "
        "even be negative relative to the separated reactants. Read only relative values: a ranking of the beta hydrogens "
        "of one substrate with one base, not rate constants.",
        "A saddle is verified when it has exactly one imaginary mode (\u03bd\u2021, in cm\u207b\u00b9) and relaxing both "
        "ways along that mode reaches the base\u2013substrate complex on one side and the alkene products on the other. "
        "Otherwise the barrier is the highest point of the relaxed path, an estimate, and is marked unverified.",
        f"Computed shares (Curtin\u2013Hammett): every path weighs its number of equivalent hydrogens \u00d7 "
        f"exp(\u2212\u0394E\u2021/RT) at T = {temperature}, summed over the paths that give the same alkene. The range is "
        f"the share when every barrier may move by \u00b1{shift} kcal/mol in the least and in the most favourable "
        f"direction. A verdict is undecided (grey, counted as not right) when the best barriers to different alkenes "
        f"lie within {shift} kcal/mol of each other: GFN2-xTB cannot tell them apart.",
    )


def method_line(result: RunResult, solvent: SolventConfig | None = None) -> str:
    """Return the method line: method, solvent model and solvent, backend and version, temperature (K).

    ``solvent`` is a job's own solvent (batches over several solvents); without it the config's is named.
    """
    m = result.config.method
    p = result.provenance
    s = solvent or m.solvent
    medium = ("gas phase (no implicit solvent)" if s.model == "none"
              else f"implicit solvent {medium_label(s.model, s.name)}")
    return (f"{m.hamiltonian}; {medium}; backend {p.backend} {p.backend_version}; "
            f"temperature {m.temperature_K:g} K (for Boltzmann weights, not used by the rule)")


def run_method_line(result: RunResult) -> str:
    """Return the method line of the whole run; when its jobs ran in several solvents, it says so."""
    solvents = {job_solvent(result, job) for job in result.jobs}
    if len(solvents) <= 1:
        return method_line(result, next(iter(solvents), None))
    return method_line(result) + "; the jobs ran in several solvents: each job's method line names its own"


def base_model_points(result: RunResult) -> tuple[str, ...]:
    """Return the point of "Reading the numbers" on the explicit-solvent default base model, when a job used it."""
    return (DEFAULT_MODEL_SENTENCE,) if any_default_model(result) else ()


def reading_points(result: RunResult) -> tuple[str, ...]:
    """Return every point of "Reading the numbers": the fixed ones, the barriers' and the base model's."""
    return (*MEANING, *barrier_points(result), *base_model_points(result))


def barrier_points(result: RunResult) -> tuple[str, ...]:
    """Return the barrier points of "Reading the numbers": what they mean, or that none were computed."""
    jobs = [j for j in result.jobs if has_barriers(j)]
    if not jobs:
        return (BARRIERS_ABSENT,)
    temperatures = tuple(sorted({j.temperature_K for j in jobs if j.temperature_K is not None}))
    points = (BENCHMARK_SAYS, *barrier_meaning(temperatures or (result.config.method.temperature_K,)))
    if len(jobs) < len(result.jobs):
        points += ("Some jobs have no computed paths: their product calls are the geometric rule's only.",)
    return points + _new_field_points(result, jobs)


def energy_used_point(jobs: list[JobRecord]) -> str:
    """Return the point of "Reading the numbers" that says which barriers drove each job's product mix."""
    used = {j.energy_used for j in jobs}
    if len(used) == 1:
        kind = next(iter(used))
        text = f"The product mixes and the E2 : SN2 split were driven by {ENERGY_WORDS[kind]} in every job"
    else:
        text = "The product mixes were driven by " + "; ".join(
            f"{ENERGY_WORDS[j.energy_used]} in {j.job_id}" for j in jobs)
    if "free" in used:
        text += (": with free energies, read \u0394G\u2021 for \u0394E\u2021 in the share rule above, and paths "
                 "without a verified saddle (no \u0394G\u2021) are left out")
    return text + "."


def _new_field_points(result: RunResult, jobs: list[JobRecord]) -> tuple[str, ...]:
    """Return the points on energy_used, \u0394G\u2021, saddle character, isotope effects and substitution (those with data)."""
    approaches = [a for j in jobs for b in j.beta_hydrogens for a in (b.anti, b.syn)]
    points = [energy_used_point(jobs)]
    if any(a.barrier_free_energy_kcal_mol is not None for a in approaches) or any(
            j.substitution is not None and j.substitution.barrier_free_energy_kcal_mol is not None for j in jobs):
        points.append(
            "\u0394G\u2021 is a free energy of activation in kcal/mol for verified saddles only: ideal-gas "
            "thermochemistry from the Hessians of the free substrate, the free base and the saddle, harmonic enthalpies, "
            "Grimme\u2019s quasi-RRHO entropy for low modes, standard state 1 M, at the run\u2019s temperature, above the "
            "free substrate plus the free base. Rotational symmetry numbers are 1 on purpose: the path degeneracy already "
            "counts symmetry once. \u201c\u2014\u201d: no \u0394G\u2021 (no verified saddle).")
    if any(a.saddle_character is not None for a in approaches):
        points.append(
            "Saddle character: C\u03b2\u2013H and C\u03b1\u2013X cleavage are each 1 \u2212 the Pauling bond order "
            "exp((r\u2080 \u2212 r)/0.3 \u00c5), r at the saddle and r\u2080 from the free substrate: 0 is an intact bond, "
            "1 a broken one. C\u2013H cleavage well ahead of C\u2013X reads carbanion-like, C\u2013X well ahead "
            "carbocation-like, the two in step central; the map places each verified saddle on these two axes "
            "(a More O\u2019Ferrall\u2013Jencks diagram).")
    if any(b.isotope_effects for j in jobs for b in j.beta_hydrogens):
        points.append("k_H/k_D: " + KIE_SENTENCE)
    if any(j.substitution is not None for j in jobs):
        points.append(
            "Substitution (SN2): the base attacks C\u03b1 from the back, the product carries the Walden inversion, and "
            "its barrier shares the zero and the kind of the E2 barriers. The E2 : SN2 split comes from the same "
            "Boltzmann mix over all paths; the textbook call beside it (primary C\u03b1 with a small base: "
            "substitution; tertiary C\u03b1 or a bulky base: elimination; secondary: a mixture) is a rule of thumb.")
    return tuple(points)
