"""YAML -> validated, frozen run configuration. Every default of elimscan lives in this package.

Errors name the key path (``substrates.0.smiles``) and, where the YAML has one, the line. Every name below is
also importable from ``elimscan.config`` itself (``from elimscan.config import RunConfig, parse_config``).

- ``frozen``: ``Frozen``, the base of every config model (immutable, unknown keys refused)
- ``method``: method, backend and implicit solvent (``MethodConfig``, ``SolventConfig``), the geometry optimiser
  (``OptimizerConfig``), threads per process (``ThreadsConfig``)
- ``conformers``: the conformer search (``ConformerConfig``) and the H-C-C-X dihedral scans (``ScanConfig``)
- ``paths``: complexes and relaxed E2/SN2 paths (``PathConfig``), saddle refinement and verification (``SaddleConfig``)
- ``basenames``: base abbreviations a chemist types (KOtBu, NaOEt, LDA, ...): the anion and its cation
  (``named_base``, ``COUNTER_IONS``)
- ``experiment``: what experiment observed for a substrate x base (``ExperimentConfig``: shares or a major product,
  with a source), the word ``SUBSTITUTION_PRODUCT`` and the bounds of an observation
- ``molecules``: substrates, bases with the built-in names (``BASE_LIBRARY``) and base models (the default:
  ``DEFAULT_EXPLICIT_MOLECULES`` in ``DEFAULT_MODEL_CONTINUA``, resolved by chem/basemodels.py), pairs, the
  suffixes a substrates file may have
- ``analysis``: the geometric rule's windows (``RuleConfig``), the energy of the product mix
  (``AnalysisConfig``), substituent series (``SeriesConfig``)
- ``dft``: the optional DFT tier (``DftConfig``)
- ``executor``: where a batch's jobs run and their time limits (``ExecutorConfig``, ``default_workers``)
- ``run``: ``RunConfig``, the whole run, with the checks across its parts, and ``DEFAULT_SEED``
- ``names``: names that become file names: ``safe_name``, the length bound ``MAX_NAME_BYTES``, ``clashing_names``
  (one rule for run, plan and batch)
- ``yamlreader``: the strict YAML reading (plain decimal numbers, true/false, no anchors or aliases, bounded
  size ``MAX_CONFIG_BYTES`` and depth ``MAX_CONFIG_DEPTH``)
- ``loading``: YAML text -> ``RunConfig`` (``parse_config``; ``config_problems`` returns every problem at once), errors
  with key path, line, "did you mean" and the quote hint for a name cut at a comma;
  ``key_line`` (the YAML line of a key path) and ``config_to_dict``

Input bounds are named constants of their block: ``MIN_TEMPERATURE_K``/``MAX_TEMPERATURE_K`` (method),
``SEED_LIMIT`` (run), ``SHARE_SUM_SLACK_PERCENT``, ``MAX_OBSERVED_ALKENES``, ``MIN_SOURCE_CHARS`` (experiment),
``CLOSED_SHELL_MULTIPLICITY``, ``MAX_SMILES_CHARS``, ``MAX_HEAVY_ATOMS``, ``MAX_EXPLICIT_MOLECULES``, ``MAX_CLUSTER_ARRANGEMENTS`` and the warning
level ``OVERNIGHT_HEAVY_ATOMS`` (molecules), ``MAX_CONFORMER_COUNT`` (conformers), ``MAX_PATH_COUNT``,
``MAX_GRADIENT_BUDGET_PER_ATOM`` and ``MAX_COMPLEX_SCREEN_FMAX_eV_per_A`` (paths).
"""

from __future__ import annotations

from elimscan.config.analysis import SERIES_MIN_MEMBERS, AnalysisConfig, RuleConfig, SeriesConfig, SeriesMemberConfig
from elimscan.config.conformers import MAX_CONFORMER_COUNT, ConformerConfig, ScanConfig
from elimscan.config.dft import DftConfig
from elimscan.config.executor import DEFAULT_JOB_TIME_LIMIT_SECONDS, ExecutorConfig, default_workers
from elimscan.config.experiment import (MAX_OBSERVED_ALKENES, MIN_SOURCE_CHARS, SHARE_SUM_SLACK_PERCENT,
                                        SUBSTITUTION_PRODUCT, ExperimentConfig)
from elimscan.config.frozen import Frozen
from elimscan.config.loading import config_problems, config_to_dict, key_line, parse_config
from elimscan.config.method import (MAX_ELECTRONIC_TEMPERATURE_K, MAX_TEMPERATURE_K, MIN_TEMPERATURE_K, MethodConfig,
                                    OptimizerConfig, SolventConfig, ThreadsConfig)
from elimscan.config.molecules import (BARE_MODEL_WORD, BASE_LIBRARY, CLOSED_SHELL_MULTIPLICITY, DEFAULT_EXPLICIT_MOLECULES,
                                       DEFAULT_MODEL_CONTINUA, MAX_CLUSTER_ARRANGEMENTS, MAX_EXPLICIT_MOLECULES,
                                       MAX_HEAVY_ATOMS, MAX_SMILES_CHARS, OVERNIGHT_HEAVY_ATOMS, SUBSTRATE_FILE_SUFFIXES, BaseConfig, BaseModelConfig,
                                       PairConfig, SubstrateConfig)
from elimscan.config.names import MAX_NAME_BYTES, clashing_names, safe_name
from elimscan.config.paths import (MAX_COMPLEX_SCREEN_FMAX_eV_per_A, MAX_GRADIENT_BUDGET_PER_ATOM, MAX_PATH_COUNT,
                                   PathConfig, SaddleConfig)
from elimscan.config.run import DEFAULT_SEED, SEED_LIMIT, RunConfig
from elimscan.config.yamlreader import MAX_CONFIG_BYTES, MAX_CONFIG_DEPTH

__all__ = [
    "AnalysisConfig", "BARE_MODEL_WORD", "BASE_LIBRARY", "BaseConfig", "BaseModelConfig", "CLOSED_SHELL_MULTIPLICITY",
    "ConformerConfig", "DEFAULT_EXPLICIT_MOLECULES", "DEFAULT_JOB_TIME_LIMIT_SECONDS", "DEFAULT_MODEL_CONTINUA",
    "DEFAULT_SEED", "DftConfig", "ExecutorConfig", "ExperimentConfig", "Frozen",
    "MAX_CONFIG_BYTES", "MAX_CONFIG_DEPTH", "MAX_CONFORMER_COUNT", "MAX_ELECTRONIC_TEMPERATURE_K",
    "MAX_CLUSTER_ARRANGEMENTS", "MAX_COMPLEX_SCREEN_FMAX_eV_per_A", "MAX_EXPLICIT_MOLECULES", "MAX_GRADIENT_BUDGET_PER_ATOM", "MAX_HEAVY_ATOMS", "MAX_NAME_BYTES", "MAX_OBSERVED_ALKENES", "MAX_PATH_COUNT",
    "MAX_SMILES_CHARS", "MIN_SOURCE_CHARS", "MAX_TEMPERATURE_K", "MIN_TEMPERATURE_K", "MethodConfig",
    "OVERNIGHT_HEAVY_ATOMS", "OptimizerConfig", "PairConfig", "PathConfig", "RuleConfig", "RunConfig", "SEED_LIMIT",
    "SERIES_MIN_MEMBERS", "SHARE_SUM_SLACK_PERCENT", "SUBSTITUTION_PRODUCT", "SUBSTRATE_FILE_SUFFIXES",
    "SaddleConfig", "ScanConfig", "SeriesConfig", "SeriesMemberConfig", "SolventConfig", "SubstrateConfig",
    "ThreadsConfig", "clashing_names", "config_problems", "config_to_dict",
    "default_workers", "key_line", "parse_config", "safe_name",
]
