"""The substrate depiction: each class's hydrogen labelled with the JSON's barrier or anti cost (RDKit SVG)."""

from __future__ import annotations

import re

import pytest

from elimscan.output.html.depictions import substrate_svg
from elimscan.results.documents import RunResult

from reportfixture import RUNS, computed, raw, result, strip_barriers


def _notes(svg: str) -> str:
    """Return the atom notes of an RDKit SVG depiction as one string (RDKit draws them a character at a time)."""
    return "".join(re.findall(r"<text[^>]*class='note'[^>]*>([^<]*)</text>", svg))


@pytest.mark.parametrize("run", RUNS)
def test_depiction_labels_each_class_with_its_lowest_relative_barrier(run):
    doc, res = raw(run), result(run)
    smiles = {m["name"]: m["smiles"] for m in doc["molecules"]}
    for job, record in zip(doc["jobs"], res.jobs):
        svg = _notes(substrate_svg(smiles[job["substrate"]], record))
        for beta in job["beta_hydrogens"]:
            values = [a["relative_barrier_kcal_mol"] for _, _, a in computed({"beta_hydrogens": [beta]})]
            label = f"{beta['class_id']}: {min(values):.2f}" if values else f"{beta['class_id']}: -"
            assert label in svg, label
    # without barriers the label is the anti cost, as before
    stripped = RunResult.model_validate(strip_barriers(doc))
    for job, record in zip(doc["jobs"], stripped.jobs):
        svg = _notes(substrate_svg(smiles[job["substrate"]], record))
        for beta in job["beta_hydrogens"]:
            cost = beta["anti_penalty_kcal_mol"]
            assert f"{beta['class_id']}: {'-' if cost is None else f'{cost:.2f}'}" in svg


@pytest.mark.parametrize("run", RUNS)
def test_depiction_numbers_every_heavy_atom_from_one(run):
    # the numbers a chemist reads beside the atoms are the class labels' numbers: RDKit index + 1
    doc, res = raw(run), result(run)
    smiles = {m["name"]: m["smiles"] for m in doc["molecules"]}
    for job, record in zip(doc["jobs"], res.jobs):
        svg = substrate_svg(smiles[job["substrate"]], record)
        notes = re.findall(r"<text[^>]*class='note'[^>]*>([^<]*)</text>", svg)
        text = "".join(notes)
        from rdkit import Chem
        heavy = Chem.MolFromSmiles(smiles[job["substrate"]]).GetNumAtoms()
        lg = job["leaving_group"]
        assert f"X {lg['leaving_atom_index0'] + 1}" in text and f"\u03b1 {lg['c_alpha_index0'] + 1}" in text
        for number in range(1, heavy + 1):
            assert str(number) in text
        for beta in job["beta_hydrogens"]:
            assert beta["class_id"] == f"C{beta['beta_carbon_index0'] + 1}-H{beta['representative_index0'] + 1}"
            assert f"\u03b2 {beta['beta_carbon_index0'] + 1}" in text
