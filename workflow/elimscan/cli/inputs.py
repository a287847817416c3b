"""The user's config read and checked before any calculation: errors name the file, the key path and the YAML line."""

from __future__ import annotations

import argparse
from pathlib import Path

from elimscan.errors import ConfigError


def read_config(path: str):
    """Return the validated config read from a YAML file; ConfigError names the file."""
    from elimscan.config import parse_config

    try:
        text = Path(path).read_text(encoding="utf-8")
    except OSError as err:
        raise ConfigError(f"cannot read config file '{path}': {err.strerror}") from err
    try:
        return parse_config(text, source=path)
    except ConfigError as err:
        located = ConfigError(f"{path}: " + str(err).replace(f"{path}: ", "", 1))  # the file named once, first
        located.key_path, located.line = err.key_path, err.line
        raise located from err


def with_engine(config, args: argparse.Namespace):
    """Return the config with ``--engine`` as its method.engine_factory, checked to load (ConfigError if not)."""
    from pydantic import ValidationError

    from elimscan.config import MethodConfig
    from elimscan.engines.factory import load_engine_factory

    spec = getattr(args, "engine", None)
    if spec:
        try:
            method = MethodConfig.model_validate({**config.method.model_dump(), "engine_factory": spec})
        except ValidationError as err:
            raise ConfigError(f"--engine '{spec}': expected 'module:function'") from err
        config = config.model_copy(update={"method": method})
    if config.method.engine_factory:
        load_engine_factory(config.method.engine_factory)
    return config


def located_error(cls, err: Exception, config_path: str, key_path: str, text: str):
    """Return an input error of class ``cls`` saying file, key path and YAML line before the message of ``err``."""
    from elimscan.config import key_line

    line = key_line(text, key_path)
    detail = getattr(err, "detail", err) if getattr(err, "key_path", None) == key_path else err
    located = cls(f"{config_path}, key '{key_path}'" + (f", line {line}" if line else "") + f": {detail}")
    located.key_path, located.line = key_path, line
    return located


def plan_located(config, config_path: str):
    """Return the batch plan of a config; an input error naming a key gets the file and the YAML line too."""
    from elimscan.batch.plan import plan_batch
    from elimscan.errors import InputError

    try:
        return plan_batch(config, config_path)
    except InputError as err:
        if not err.key_path or err.line is not None:
            raise
        try:
            text = Path(config_path).read_text(encoding="utf-8")
        except OSError:
            raise err from None
        raise located_error(type(err), err, config_path, err.key_path, text) from err


def check_structures(config, config_path: str) -> None:
    """Raise StructureError (file, key path and YAML line) for the first substrate or base that cannot be used.

    Substrates are perceived in full (leaving group, maps, beta hydrogens), no base may be its job's
    substrate, and bases need a basic atom: all before any calculation.
    """
    from elimscan.errors import StructureError
    from elimscan.chem.inputcheck import (check_base, check_pair, check_substrate, gas_phase_ion_problem,
                                          modelled_charge)

    try:
        text = Path(config_path).read_text(encoding="utf-8")
    except OSError:
        text = ""
    charges: dict[str, int] = {}
    for index, item in enumerate(config.substrates):
        try:
            charge = check_substrate(item.smiles, item.charge, item.multiplicity, f"substrate '{item.name}'", config.seed)
        except StructureError as err:
            raise located_error(StructureError, err, config_path, f"substrates.{index}.smiles", text) from err
        charges[f"substrate '{item.name}'"] = charge
    base_index = {b.name: i for i, b in enumerate(config.bases)}
    for substrate, base in config.jobs():
        try:
            check_pair(substrate.name, substrate.smiles, base.name, base.smiles)
        except StructureError as err:
            raise located_error(StructureError, err, config_path, f"bases.{base_index[base.name]}.smiles", text) from err
    for index, item in enumerate(config.bases):
        try:
            charge = check_base(item.smiles, item.charge, item.multiplicity, f"base '{item.name}'")
        except StructureError as err:
            raise located_error(StructureError, err, config_path, f"bases.{index}.smiles", text) from err
        charges[f"base '{item.name}'"] = modelled_charge(charge, item.model.counter_ion)
    problem = gas_phase_ion_problem(config.method.solvent.model, charges)
    if problem is not None:
        raise located_error(ConfigError, problem, config_path, "method.solvent.model", text)


def batch_only(config) -> list[str]:
    """Return the batch-only keys a config uses (substrates_file, solvents)."""
    return [key for key in ("substrates_file", "solvents") if getattr(config, key) is not None]
