"""YAML -> validated, frozen run configuration. Every default of elimscan lives in this package.

Errors name the key path (``substrates.0.smiles``) and, where the YAML has one, the line. Every name below is
also importable from ``elimscan.config`` itself (``from elimscan.config import RunConfig, parse_config``).

- ``frozen``: ``Frozen``, the base of every config model (immutable, unknown keys refused)
- ``method``: method, backend and implicit solvent (``MethodConfig``, ``SolventConfig``), the geometry optimiser
  (``OptimizerConfig``), threads per process (``ThreadsConfig``)
- ``conformers``: the conformer search (``ConformerConfig``) and the H-C-C-X dihedral scans (``ScanConfig``)
- ``paths``: complexes and relaxed E2/SN2 paths (``PathConfig``), saddle refinement and verification (``SaddleConfig``)
- ``molecules``: substrates, bases with the built-in names (``BASE_LIBRARY``) and base models, pairs, the
  suffixes a substrates file may have
- ``analysis``: the geometric rule's windows (``RuleConfig``), the energy of the product mix
  (``AnalysisConfig``), substituent series (``SeriesConfig``)
- ``dft``: the optional DFT tier (``DftConfig``)
- ``executor``: where a batch's jobs run and their time limits (``ExecutorConfig``, ``default_workers``)
- ``run``: ``RunConfig``, the whole run, with the checks across its parts, and ``DEFAULT_SEED``
- ``loading``: YAML text -> ``RunConfig`` (``parse_config``), errors with key path, line and "did you mean";
  ``key_line`` (the YAML line of a key path) and ``config_to_dict``
"""

from __future__ import annotations

from elimscan.config.analysis import SERIES_MIN_MEMBERS, AnalysisConfig, RuleConfig, SeriesConfig, SeriesMemberConfig
from elimscan.config.conformers import ConformerConfig, ScanConfig
from elimscan.config.dft import DftConfig
from elimscan.config.executor import DEFAULT_JOB_TIME_LIMIT_SECONDS, ExecutorConfig, default_workers
from elimscan.config.frozen import Frozen
from elimscan.config.loading import config_to_dict, key_line, parse_config
from elimscan.config.method import MethodConfig, OptimizerConfig, SolventConfig, ThreadsConfig
from elimscan.config.molecules import (BASE_LIBRARY, SUBSTRATE_FILE_SUFFIXES, BaseConfig, BaseModelConfig, PairConfig,
                                       SubstrateConfig)
from elimscan.config.paths import PathConfig, SaddleConfig
from elimscan.config.run import DEFAULT_SEED, RunConfig

__all__ = [
    "AnalysisConfig", "BASE_LIBRARY", "BaseConfig", "BaseModelConfig", "ConformerConfig",
    "DEFAULT_JOB_TIME_LIMIT_SECONDS", "DEFAULT_SEED", "DftConfig", "ExecutorConfig", "Frozen", "MethodConfig",
    "OptimizerConfig", "PairConfig", "PathConfig", "RuleConfig", "RunConfig", "SERIES_MIN_MEMBERS",
    "SUBSTRATE_FILE_SUFFIXES", "SaddleConfig", "ScanConfig", "SeriesConfig", "SeriesMemberConfig", "SolventConfig",
    "SubstrateConfig", "ThreadsConfig", "config_to_dict", "default_workers", "key_line", "parse_config",
]
