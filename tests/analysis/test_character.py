"""Saddle character from Pauling bond orders (Pauling, J. Am. Chem. Soc. 1947, 69, 542)."""

from __future__ import annotations

import math

import pytest

from elimscan.analysis.character import fractional_cleavage, saddle_character


def test_pauling_bond_order_definition():
    assert fractional_cleavage(1.09, 1.09) == 0.0
    # one Pauling constant of stretch leaves bond order 1/e
    assert fractional_cleavage(1.09, 1.39) == pytest.approx(1 - 1 / math.e)
    assert fractional_cleavage(1.09, 3.0) > 0.99


def test_labels_follow_which_bond_leads():
    assert saddle_character(1.09, 1.60, 1.95, 2.05).label == "carbanion-like"
    assert saddle_character(1.09, 1.15, 1.95, 2.60).label == "carbocation-like"
    assert saddle_character(1.09, 1.35, 1.95, 2.25).label == "central"


@pytest.mark.xtb
@pytest.mark.slow
def test_beta_phenyl_and_poorer_leaving_group_move_the_saddle_toward_carbanion_like():
    # Variable E2 transition-state theory: a beta phenyl (stabilising negative charge on C-beta) and a poorer
    # leaving group (Cl below Br) shift the E2 saddle toward the carbanion-like (E1cb-like) side, C-H cleavage
    # ahead of C-X cleavage (Bunnett, Angew. Chem. Int. Ed. 1962, 1, 225, from memory; March's Advanced
    # Organic Chemistry, the E2 mechanism chapter, from memory). Measure: c_h_cleavage - c_x_cleavage of the
    # verified anti saddle (Pauling bond orders, elimscan.analysis.character), ethoxide in ALPB(ethanol), GFN2-xTB.
    from elimscan.config import (BaseConfig, ConformerConfig, MethodConfig, PathConfig, RunConfig, SolventConfig,
                                 SubstrateConfig)
    from elimscan.engines.xtb import EngineSettings, XtbEngine
    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record

    config = RunConfig(
        method=MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol")),
        conformers=ConformerConfig(max_relaxations=4),
        paths=PathConfig(approaches=("anti",), substitution=False, base_rotations=1),
        substrates=(SubstrateConfig(name="ethyl bromide", smiles="CCBr"),
                    SubstrateConfig(name="ethyl chloride", smiles="CCCl"),
                    SubstrateConfig(name="2-phenylethyl bromide", smiles="BrCCc1ccccc1")),
        bases=(BaseConfig(name="ethoxide"),))
    engine = XtbEngine(EngineSettings.from_method(config.method))
    outcome = run_config(config, engine)
    lead = {}
    for substrate, base in outcome.jobs:
        job = job_record(substrate, base, outcome, config)
        assert job.status == "ok", job.error
        (beta,) = job.beta_hydrogens  # one beta-H class in each of the three substrates
        anti = beta.anti
        assert anti.saddle_verified and anti.saddle_character is not None, (substrate.name, anti.saddle_note)
        character = anti.saddle_character
        lead[substrate.name] = character.c_h_cleavage - character.c_x_cleavage
        print(f"{substrate.name}: dE {anti.barrier_kcal_mol:.2f} kcal/mol, imaginary {anti.imaginary_frequency_cm1} cm-1, "
              f"C-H cleavage {character.c_h_cleavage:.3f}, C-X cleavage {character.c_x_cleavage:.3f}, "
              f"lead {lead[substrate.name]:+.3f} ({character.label})")
    assert lead["2-phenylethyl bromide"] > lead["ethyl bromide"], lead
    assert lead["ethyl chloride"] > lead["ethyl bromide"], lead
