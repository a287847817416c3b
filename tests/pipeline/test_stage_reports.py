"""Stages outside the paths report their gradients and seconds through the paths' own mechanism (toy engine)."""

from __future__ import annotations

import re

from toyjobs import ToyJobEngine

from elimscan.config import BaseConfig, OptimizerConfig, PathConfig, RunConfig, SubstrateConfig
from elimscan.pipeline.compute import run_config


def test_conformer_search_scans_hessians_and_the_base_relaxation_each_report_their_gradients():
    config = RunConfig(substrates=(SubstrateConfig(name="a", smiles="CC(Br)C"),), bases=(BaseConfig(name="methoxide"),),
                       optimizer=OptimizerConfig(name="bfgs", fmax_eV_per_A=0.05),
                       conformers={"base_embeddings": 2, "per_rotatable_bond": 1, "max_relaxations": 2},
                       scan={"step_deg": 60},
                       paths=PathConfig(approaches=("anti",), points=3, base_rotations=1, substitution=False,
                                        saddle={"refine": False}))
    heard = []
    run_config(config, ToyJobEngine(), lambda done, total, text: heard.append(text))
    opened = [text for text in heard if re.search(r" \((substrate|base) \d+ gradients, \d+ s so far\)$", text)]
    stages = [re.sub(r" \((substrate|base) .*", "", text) for text in opened]
    assert stages[0] == "substrate 'a': conformer search, 1 beta-H classes"
    assert any(s.startswith("substrate 'a': scanning H-C-C-X of C") for s in stages)
    assert stages[-3:] == ["substrate 'a': Hessian of the lowest conformer", "base 'methoxide': relaxation",
                           "base 'methoxide': Hessian"]
    # each opening counts what the substrate (or base) spent before it: the Hessian opens after the search and scans
    spent = {s: int(re.search(r"(\d+) gradients", t).group(1)) for s, t in zip(stages, opened)}
    assert spent["substrate 'a': conformer search, 1 beta-H classes"] == 0
    assert spent["substrate 'a': Hessian of the lowest conformer"] > 0
    assert spent["base 'methoxide': relaxation"] == 0 and spent["base 'methoxide': Hessian"] > 0
