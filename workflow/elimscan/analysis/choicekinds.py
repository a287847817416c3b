"""Which kinds of choice one job's E2 question holds, named as the reference benchmark's categories.

The benchmark (validation/cases.yaml) scores its cases per category; a job of a user is not a case, but the choices
it asks of the barriers can be read from its record: between alkenes of an open chain, between E and Z, between
hydrogens of a ring that can both reach anti (or only one can), between E2 and SN2. The report puts the benchmark's
record for those kinds of choice beside the job's verdict. Pure: reads the job record only.
"""

from __future__ import annotations

from rdkit import Chem

from elimscan.results.records import JobRecord

#: the benchmark categories (analysis.benchmark_cases.CATEGORIES) a single job can be recognised as, in this order
JOB_KINDS = ("open-chain-regio", "ez-ratio", "ring-competing", "ring-single", "e2-vs-sn2")
#: the rule's calls of an alkene that an anti-periplanar hydrogen gives (RuleRecord: 'major' or 'minor')
ANTI_CALLS = ("major", "minor")


def constitution(smiles: str) -> str:
    """Return the canonical SMILES of an alkene with every stereo mark removed (E/Z and tetrahedral)."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        raise ValueError(f"not a SMILES: {smiles!r}")
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def _ring_job(job: JobRecord) -> bool:
    """Return whether any alkene of the job has its double bond inside a ring."""
    return any(approach.product_ring_position == "endocyclic"
               for beta in job.beta_hydrogens for approach in (beta.anti, beta.syn))


def choice_kinds(job: JobRecord) -> tuple[str, ...]:
    """Return the benchmark categories of the choices a finished job asks of its barriers (JOB_KINDS order; empty
    for a failed job or one with a single possible alkene and no SN2 path)."""
    if job.status != "ok":
        return ()
    alkenes = {p.smiles for p in job.products}
    forms = {constitution(smiles) for smiles in alkenes}
    kinds = set()
    if _ring_job(job):
        reachable = {p.smiles for p in job.products if p.rule_call in ANTI_CALLS}
        if len(reachable) >= 2:
            kinds.add("ring-competing")
        elif len(reachable) == 1 and len(alkenes) >= 2:
            kinds.add("ring-single")
    else:
        if len(forms) >= 2:
            kinds.add("open-chain-regio")
        if len(alkenes) > len(forms):  # some constitution comes as both E and Z
            kinds.add("ez-ratio")
    if job.substitution is not None and job.substitution.path_status != "not computed":
        kinds.add("e2-vs-sn2")
    return tuple(kind for kind in JOB_KINDS if kind in kinds)
