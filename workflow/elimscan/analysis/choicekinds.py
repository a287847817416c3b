"""Which kinds of choice one job's E2 question holds, named as the reference benchmark's categories.

The benchmark (validation/cases.yaml) scores its cases per category; a job of a user is not a case, but the choices
it asks of the barriers can be read from its record: between alkenes of an open chain, between E and Z alkenes
that anti paths of different hydrogens give, between hydrogens of a ring that can both reach anti (or only one
can), between E2 and SN2. The report puts the benchmark's record for those kinds of choice beside the job's
verdict. A job that asks another kind of choice (an endocyclic against an exocyclic alkene, E against Z from the
anti and the syn path of one hydrogen, which the benchmark scores as stereospecific) gets none of these. Pure:
reads the job record only.
"""

from __future__ import annotations

from rdkit import Chem

from elimscan.results.records import JobRecord

#: the benchmark categories (analysis.benchmark_cases.CATEGORIES) a single job can be recognised as, in this order
JOB_KINDS = ("open-chain-regio", "ez-ratio", "ring-competing", "ring-single", "e2-vs-sn2")
#: the kinds that are a choice between alkenes (the others: between E2 and SN2)
ALKENE_KINDS = ("open-chain-regio", "ez-ratio", "ring-competing", "ring-single")


def constitution(smiles: str) -> str:
    """Return the canonical SMILES of an alkene with every stereo mark removed (E/Z and tetrahedral)."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        raise ValueError(f"not a SMILES: {smiles!r}")
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def _alkene_kinds(job: JobRecord) -> set[str]:
    """Return the alkene kinds of a finished job's choice (empty for one alkene or a mixed ring/exocyclic choice)."""
    alkenes = {p.smiles for p in job.products}
    if len(alkenes) < 2:
        return set()
    positions = {a.product_ring_position for b in job.beta_hydrogens for a in (b.anti, b.syn)}
    if positions == {"endocyclic"}:
        # hydrogens whose anti-periplanar geometry lies within the rule's window, and the ring alkenes they give
        reachable = {b.anti.product_smiles for b in job.beta_hydrogens if b.rule_status == "anti accessible"}
        return {"ring-competing"} if len(reachable) >= 2 else {"ring-single"} if len(reachable) == 1 else set()
    if positions != {"acyclic"}:
        return set()  # an exocyclic alkene against another: no category of the benchmark
    kinds = set()
    if len({constitution(s) for s in alkenes}) >= 2:
        kinds.add("open-chain-regio")
    anti = {b.anti.product_smiles for b in job.beta_hydrogens}  # one alkene per hydrogen class and its anti path
    if len(anti) > len({constitution(s) for s in anti}):
        kinds.add("ez-ratio")  # E and Z from anti paths of different hydrogens
    return kinds


def choice_kinds(job: JobRecord) -> tuple[str, ...]:
    """Return the benchmark categories of the choices a finished job asks of its barriers (JOB_KINDS order; empty
    for a failed job, and for one alkene without a computed SN2 path)."""
    if job.status != "ok":
        return ()
    kinds = _alkene_kinds(job)
    if job.substitution is not None and job.substitution.path_status == "ok":
        kinds.add("e2-vs-sn2")
    return tuple(kind for kind in JOB_KINDS if kind in kinds)
