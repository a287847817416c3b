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
def test_beta_phenyl_and_poorer_leaving_group_move_the_saddle_toward_carbanion_like(ethoxide_e2_jobs):
    # Variable E2 transition-state theory: a beta phenyl (stabilising negative charge on C-beta) and a poorer
    # leaving group (Cl below Br) shift the E2 saddle toward the carbanion-like (E1cb-like) side, C-H cleavage
    # ahead of C-X cleavage (Bunnett, Angew. Chem. Int. Ed. 1962, 1, 225, from memory; March's Advanced
    # Organic Chemistry, the E2 mechanism chapter, from memory). Measure: c_h_cleavage - c_x_cleavage of the
    # verified anti saddle (Pauling bond orders, elimscan.analysis.character), ethoxide in ALPB(ethanol), GFN2-xTB.
    lead = {}
    # (the jobs: tests/analysis/conftest.py, shared with the isotope-effect and dG checks of test_thermo.py)
    for name, job in ethoxide_e2_jobs.items():
        assert job.status == "ok", job.error
        (beta,) = job.beta_hydrogens  # one beta-H class in each of the three substrates
        anti = beta.anti
        assert anti.saddle_verified and anti.saddle_character is not None, (name, anti.saddle_note)
        character = anti.saddle_character
        lead[name] = character.c_h_cleavage - character.c_x_cleavage
        print(f"{name}: dE {anti.barrier_kcal_mol:.2f} kcal/mol, imaginary {anti.imaginary_frequency_cm1} cm-1, "
              f"C-H cleavage {character.c_h_cleavage:.3f}, C-X cleavage {character.c_x_cleavage:.3f}, "
              f"lead {lead[name]:+.3f} ({character.label})")
    # Margins the measured leads have (2026-12-03, the same to 0.001 under OpenBLAS Haswell and SkylakeX kernels:
    # ethyl bromide -0.264, ethyl chloride -0.184, 2-phenylethyl bromide -0.076).
    assert lead["2-phenylethyl bromide"] - lead["ethyl bromide"] > 0.1, lead
    assert lead["ethyl chloride"] - lead["ethyl bromide"] > 0.05, lead
