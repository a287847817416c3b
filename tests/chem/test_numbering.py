"""Atoms as people read them (numbered from 1) and as machine fields keep them (0-based, named *_index0)."""

from __future__ import annotations

import json

from elimscan.chem.atomgraph import atom_number, class_label
from elimscan.chem.perception import perceive_substrate
from elimscan.results.documents import RunResult
from elimscan.results.records import BetaHydrogenRecord, LeavingGroupRecord
from elimscan.results.relabel import relabel_job


def test_class_labels_number_atoms_from_one():
    # (S)-2-bromobutane: RDKit order C1 C2 Br3 C4 C5 (SMILES atoms first, then their hydrogens)
    sub = perceive_substrate("C[C@H](Br)CC")
    assert sub.leaving_group.leaving_atom_index == 2 and sub.leaving_group.c_alpha_index == 1
    for c in sub.beta_classes:
        assert c.class_id == f"C{c.beta_carbon_index + 1}-H{c.representative_index + 1}"
        assert c.class_id == class_label(c.beta_carbon_index, c.representative_index)
    assert {c.class_id.split("-")[0] for c in sub.beta_classes} == {"C1", "C4"}  # the methyl and the CH2
    assert atom_number(0) == 1


def test_machine_fields_are_zero_based_and_named_so():
    record = LeavingGroupRecord(label="Br", kind="halide", leaving_atom_index=2, c_alpha_index=1)
    dumped = json.loads(record.model_dump_json())
    assert dumped == {"label": "Br", "kind": "halide", "leaving_atom_index0": 2, "c_alpha_index0": 1, "map_number": None}
    assert LeavingGroupRecord.model_validate(dumped) == record
    # the names of schema 0.7.0 and older are still read
    old = {"label": "Br", "kind": "halide", "leaving_atom_index": 2, "c_alpha_index": 1}
    assert LeavingGroupRecord.model_validate(old) == record
    names = set(BetaHydrogenRecord.model_json_schema(mode="serialization")["properties"])
    assert {"beta_carbon_index0", "hydrogen_indices0", "representative_index0"} <= names
    assert not {"beta_carbon_index", "hydrogen_indices", "representative_index"} & names


def test_old_results_are_read_with_labels_numbered_from_one():
    job = {"beta_hydrogens": [{"class_id": "C0-H5", "beta_carbon_index": 0, "representative_index": 4,
                               "scans": [{"xyz_file": "substrates/x/scan-C0-H5-0.xyz"}]}],
           "products": [{"via_classes": ["C0-H5"], "reason": "from C0-H5 anti"}]}
    new = relabel_job(job)
    assert new["beta_hydrogens"][0]["class_id"] == "C1-H5"
    assert new["products"][0] == {"via_classes": ["C1-H5"], "reason": "from C1-H5 anti"}
    assert new["beta_hydrogens"][0]["scans"][0]["xyz_file"] == "substrates/x/scan-C0-H5-0.xyz"  # a path stays


def test_a_current_document_is_not_relabelled():
    assert RunResult.model_fields["schema_version"].default == "0.8.0"
    for version in ("0.8.0", "0.7.1"):  # 0.7.1 numbered from 1 already; 0.8.0 only added the DFT saddle fields
        data = {"schema_version": version, "jobs": [{"job_id": "a", "beta_hydrogens": [
            {"class_id": "C2-H7", "beta_carbon_index0": 1, "representative_index0": 6}]}]}
        assert RunResult._numbered_from_one(data) is data
