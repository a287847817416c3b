"""Whole GFN2-xTB jobs against experimental product outcomes with ethoxide in ethanol.

Expected failures (strict) while GFN2-xTB disagrees with experiment, each carrying the number measured. The
two jobs run once a session (bare ethoxide, ALPB(ethanol), the default settings otherwise but for the two
narrowings said at the fixture).
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc
from rdkit import Chem

from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL


def same(smiles: str):
    """Return a test: is an RDKit molecule this one (stereo included)?"""
    canonical = Chem.CanonSmiles(smiles)
    return lambda mol: Chem.MolToSmiles(mol) == canonical


def ring_alkene(smarts: str):
    """Return a test: does an RDKit molecule (a methylcyclohexene) match this SMARTS?"""
    pattern = Chem.MolFromSmarts(smarts)
    return lambda mol: mol.HasSubstructMatch(pattern)


ONE_BUTENE, E_2_BUTENE, Z_2_BUTENE = same("C=CCC"), same("C/C=C/C"), same("C/C=C\\C")
ONE_METHYLCYCLOHEXENE = ring_alkene("[CH3][C;R1]=[C;R1]")  # trisubstituted, the Zaitsev alkene
THREE_METHYLCYCLOHEXENE = ring_alkene("[CH3][CH1;R1][C;R1]=[C;R1]")  # disubstituted

#: 2-bromobutane + NaOEt/EtOH: 81 % 2-butenes, 19 % 1-butene (standard textbooks, e.g. J. G. Smith, Organic
#: Chemistry); the issue allows up to 35 % 1-butene
ONE_BUTENE_MAX_SHARE = 0.35
#: the largest change settings alone made to these barriers (measured, see the fixture), kcal/mol: a check passes
#: only with that much room, so that noise cannot turn its expected failure into a pass
MARGIN_KCAL_MOL = 0.3
#: RT at the jobs' temperature (298.15 K), kcal/mol (R and the calorie from CODATA 2018 via scipy)
RT_KCAL_MOL = sc.R * 298.15 / sc.calorie / 1e3


def with_margin(share_max: float) -> float:
    """Return the share of one product (0-1) that stays below ``share_max`` when its barrier drops by the margin."""
    odds = share_max / (1.0 - share_max) * math.exp(-MARGIN_KCAL_MOL / RT_KCAL_MOL)
    return odds / (1.0 + odds)


#: the least (E) share of the 2-butenes that puts the (Z) isomer's effective barrier the method's uncertainty above
#: the (E)'s: elimscan's 1 kcal/mol close call (analysis.rule.METHOD_UNCERTAINTY_KCAL_MOL) applied to the two
#: isomers' shares; a smaller lead is no call
E_OF_2_BUTENES_LEAST = 1.0 / (1.0 + math.exp(-METHOD_UNCERTAINTY_KCAL_MOL / RT_KCAL_MOL))


@pytest.fixture(scope="session")
def ethoxide_jobs() -> dict:
    """Return job records (by substrate name) of 2-bromobutane and cis-2-methylcyclohexyl chloride + ethoxide."""
    # Narrowed to what the checks read, the product shares among the alkenes:
    # - anti paths only: every product here has an anti path, and the syn paths of both jobs lie 9 kcal/mol
    #   (2-bromobutane) and 11 kcal/mol (cis-2-methylcyclohexyl chloride) or more above the anti ones in the
    #   committed runs with syn paths (tests/data/report-fixture/halobutane and ring), weights below 1e-6;
    # - no SN2 path: the alkene shares are Boltzmann shares over the E2 paths alone
    #   (analysis.rule.product_fractions); the SN2 path enters only the separate E2/SN2 split.
    # Measured 2026-12-03 (the same to 0.001 kcal/mol under OpenBLAS Haswell and SkylakeX): about 175 s of CPU.
    # The rest stays at the defaults: one base orientation and four conformer relaxations would save about 50 s
    # but moved these barriers by up to 0.3 kcal/mol (measured), which is no longer the same job.
    from elimscan.config import BaseConfig, MethodConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.engines.xtb import EngineSettings, XtbEngine
    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record

    config = RunConfig(method=MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol")),
                       paths=PathConfig(approaches=("anti",), substitution=False),
                       substrates=(SubstrateConfig(name="2-bromobutane", smiles="C[C@H](Br)CC"),
                                   SubstrateConfig(name="cis-2-methylcyclohexyl chloride",
                                                   smiles="C[C@@H]1CCCC[C@@H]1Cl")),
                       bases=(BaseConfig(name="ethoxide", model="bare"),))
    outcome = run_config(config, XtbEngine(EngineSettings.from_method(config.method)))
    jobs = {substrate.name: job_record(substrate, base, outcome, config) for substrate, base in outcome.jobs}
    for job in jobs.values():
        print(f"{job.substrate}: " + ", ".join(f"{p.smiles} {p.fraction}" for p in job.products)
              + " | " + ", ".join(f"{b.class_id} {b.anti.barrier_kcal_mol} ({b.anti.barrier_source})"
                                  for b in job.beta_hydrogens if b.anti.path_status == "ok")
              + f" | {job.verdict.reason}")
    return jobs


def share(job, is_product) -> float:
    """Return the computed share of the one product of ``job`` that passes ``is_product``; KeyError if not one."""
    found = [p for p in job.products if p.fraction is not None and is_product(Chem.MolFromSmiles(p.smiles))]
    if len(found) != 1:
        raise KeyError(f"{job.job_id}: {[p.smiles for p in found]} computed products of the kind asked for")
    return found[0].fraction


@pytest.mark.xtb
@pytest.mark.slow
def test_every_anti_product_of_both_jobs_has_a_computed_share(ethoxide_jobs):
    # What the comparisons below stand on: both jobs finished, and each alkene they compare has an anti path
    # with a barrier (2-bromobutane: 1-butene from C1, (E)- and (Z)-2-butene from the two C3 hydrogens;
    # cis-2-methylcyclohexyl chloride, Cl axial: 1-methylcyclohexene from C2-H, 3-methylcyclohexene from C6-H).
    for job in ethoxide_jobs.values():
        assert job.status == "ok", job.error
    chain, ring = ethoxide_jobs["2-bromobutane"], ethoxide_jobs["cis-2-methylcyclohexyl chloride"]
    shares = [share(chain, kind) for kind in (ONE_BUTENE, E_2_BUTENE, Z_2_BUTENE)]
    assert sum(shares) == pytest.approx(1.0, abs=1e-3)
    assert share(ring, ONE_METHYLCYCLOHEXENE) + share(ring, THREE_METHYLCYCLOHEXENE) == pytest.approx(1.0, abs=1e-3)


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed 40.6 % 1-butene against at most 24.5 % (35 % with 0.3 kcal/mol of room) "
                          "(2026-12-04, GFN2-xTB/ALPB(ethanol), verified anti saddles, dE)")
def test_2_bromobutane_with_ethoxide_gives_little_1_butene(ethoxide_jobs):
    # 2-bromobutane + NaOEt in ethanol: 19 % 1-butene, 81 % 2-butenes (standard textbooks, e.g. J. G. Smith,
    # Organic Chemistry). The computed share of 1-butene among the alkenes must be at most 35 %. Measured
    # 2026-12-04 (after conformers kept the labels of geminal hydrogens): barriers (dE) C1-H -3.28, C3-H (E)
    # -3.99, C3-H (Z) -3.31 kcal/mol: 40.6 % 1-butene, 45.2 % E, 14.3 % Z. Measured 2026-12-03, before that fix:
    # 42.9 % with the two C3 paths under each other's names. The 1-butene barrier would have to rise by about
    # 0.14 kcal/mol to reach 35 %, less than settings alone moved it: the check asks for the 35 % with 0.3 kcal/mol
    # of room (at most 24.5 %), so that noise cannot pass it.
    assert share(ethoxide_jobs["2-bromobutane"], ONE_BUTENE) <= with_margin(ONE_BUTENE_MAX_SHARE)


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed (E) 76 % of the 2-butenes, its saddle 0.68 kcal/mol below the (Z) one, inside the "
                          "1 kcal/mol close call (2026-12-04, GFN2-xTB/ALPB(ethanol), bare ethoxide, dE)")
def test_2_bromobutane_with_ethoxide_gives_more_e_than_z_2_butene(ethoxide_jobs):
    # trans-2-Butene is the major 2-butene from 2-bromobutane with alkoxides (from memory: not seen in a source with
    # numbers; the paper it was cited to, Brown & Klimisch, J. Am. Chem. Soc. 1966, 88, 1425, covers potassium
    # tert-butoxide only). Measured 2026-12-04: 45.2 % (E)- against 14.3 % (Z)-2-butene, the E saddle 0.68 kcal/mol
    # below the Z one (a ratio of about 3), alike under the OpenBLAS Haswell kernel: E ahead, but by less than
    # the gap under which elimscan itself calls two products undecided, so the check asks for a lead of 1 kcal/mol
    # (it asked only for E > Z until 2026-12-05). It was a strict expected failure (13.6 % E against 43.6 % Z)
    # until conformers kept the labels of geminal hydrogens: the two saddles had been reported under each other's
    # names.
    chain = ethoxide_jobs["2-bromobutane"]
    e, z = share(chain, E_2_BUTENE), share(chain, Z_2_BUTENE)
    assert e / (e + z) >= E_OF_2_BUTENES_LEAST, (e, z)


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed 66.6 % 1-methylcyclohexene but undecided: its saddle only 0.41 kcal/mol below "
                          "the 3-methylcyclohexene one (2026-12-03, GFN2-xTB/ALPB(ethanol), verified anti saddles, "
                          "dE); the committed run of the enantiomer had 59 % 3-methylcyclohexene; a pass needs the "
                          "gap to reach 1 kcal/mol, and two runs differed by 0.63")
def test_cis_2_methylcyclohexyl_chloride_with_ethoxide_gives_mainly_1_methylcyclohexene(ethoxide_jobs):
    # cis-2-Methylcyclohexyl chloride + ethoxide: 1-methylcyclohexene is the major product (Hückel and
    # co-workers on cyclic cis/trans isomers; standard textbooks; from memory): with Cl axial both C2-H and
    # C6-H are anti to it and the more substituted alkene wins. The computed major product must be
    # 1-methylcyclohexene, and decided: "undecided" (best paths to the two alkenes within the tool's 1 kcal/mol
    # method uncertainty) is no win. The major product alone is a knife-edge here: measured 2026-12-03, C2-H
    # 3.67 against C6-H(axial) 4.08 kcal/mol (67 % 1-methylcyclohexene; alike under two OpenBLAS kernels), while
    # the committed run of the enantiomer (tests/data/report-fixture/ring) has 4.08 against 3.87 (59 %
    # 3-methylcyclohexene): a plain "major product" check would pass or fail with the embedding.
    ring = ethoxide_jobs["cis-2-methylcyclohexyl chloride"]
    assert ONE_METHYLCYCLOHEXENE(Chem.MolFromSmiles(ring.verdict.computed_major)), ring.verdict
    assert not ring.verdict.within_method_uncertainty, ring.verdict
