"""GFN2-xTB jobs shared by the analysis tests: computed once a session, on first use."""

from __future__ import annotations

import pytest


@pytest.fixture(scope="session")
def ethoxide_e2_jobs() -> dict:
    """Return job records (by substrate name) of three primary bromides/chlorides + ethoxide, ALPB(ethanol), anti only.

    Ethyl bromide, ethyl chloride and 2-phenylethyl bromide, each with one beta-H class: its anti path refined
    to a verified saddle, with its quasi-RRHO dG and k_H/k_D (elimscan.pipeline.energetics). Narrowed to keep
    the run short: no syn paths and no SN2 path (nothing read from these jobs uses them), one base orientation
    and at most four conformer relaxations (these substrates have one or two backbone rotamers).
    """
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
        bases=(BaseConfig(name="ethoxide", model="bare"),))
    engine = XtbEngine(EngineSettings.from_method(config.method))
    outcome = run_config(config, engine)
    return {substrate.name: job_record(substrate, base, outcome, config) for substrate, base in outcome.jobs}
