"""The user's config read and checked before any calculation: errors name the file, the key path and the YAML line."""

from __future__ import annotations

import argparse

from elimscan.errors import ConfigError


def read_config_text(path: str) -> str:
    """Return the text of a config file; ConfigError names the file when it is unreadable, too large or not UTF-8."""
    from elimscan.config import MAX_CONFIG_BYTES

    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_CONFIG_BYTES + 1)
    except OSError as err:
        raise ConfigError(f"cannot read config file '{path}': {err.strerror or err}") from err
    if len(data) > MAX_CONFIG_BYTES:
        raise ConfigError(f"{path}: the config has more than {MAX_CONFIG_BYTES:,} bytes (a config lists settings and a "
                          "few molecules: give many substrates in a 'substrates_file')")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[: err.start].count(b"\n") + 1
        raise ConfigError(f"{path}: the config is not UTF-8 text (byte 0x{data[err.start]:02x} at offset {err.start}, "
                          f"line {line}); save it as UTF-8") from err


def read_config(path: str):
    """Return the validated config read from a YAML file; ConfigError names the file."""
    from elimscan.config import parse_config

    text = read_config_text(path)
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
        raise located_error(type(err), err, config_path, err.key_path, _config_text(config_path)) from err


def _config_text(config_path: str) -> str:
    """Return the config's text for locating keys ('' when it cannot be read again)."""
    try:
        return read_config_text(config_path)
    except ConfigError:
        return ""


def check_structures(config, config_path: str) -> None:
    """Raise StructureError (file, key path and YAML line) for the first substrate or base that cannot be used.

    Substrates are perceived in full (leaving group, maps, beta hydrogens), no base may be its job's
    substrate, and bases need a basic atom: all before any calculation.
    """
    from elimscan.errors import StructureError
    from elimscan.chem.inputcheck import (check_base, check_pair, check_substrate, gas_phase_ion_problem,
                                          modelled_charge)

    text = _config_text(config_path)
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


def check_models(config, config_path: str, geometries: dict[str, tuple[str, str]]) -> None:
    """Raise StructureError (file, key path, YAML line) for a base model or a geometry file that cannot be used.

    Both would otherwise fail only after the substrate or base is computed: the base model is built as the
    calculation builds it, and each geometry file is matched to its substrate's SMILES.
    """
    from elimscan.chem.inputcheck import check_base_model, check_explicit_smiles, check_geometry
    from elimscan.errors import StructureError

    text = _config_text(config_path)
    for index, item in enumerate(config.bases):
        model = item.model
        key = f"bases.{index}.model.explicit_smiles"
        try:
            if model.explicit_smiles is not None:
                check_explicit_smiles(model.explicit_smiles, item.name)
            key = f"bases.{index}.model"
            check_base_model(item.smiles, item.charge, item.multiplicity, model.counter_ion, model.explicit,
                             model.explicit_smiles, config.seed, item.name)
        except StructureError as err:
            raise located_error(StructureError, err, config_path, key, text) from err
    from elimscan.chem.inputcheck import experiment_alkene_problem
    for index, item in enumerate(config.substrates):
        for base, observed in item.experiment.items():
            problem = experiment_alkene_problem(item.smiles, observed, config.seed)
            if problem is not None:
                raise located_error(ConfigError, problem[1], config_path,
                                    f"substrates.{index}.experiment.{base}.{problem[0]}", text)
    for index, item in enumerate(config.substrates):
        if item.name not in geometries:
            continue
        try:
            check_geometry(item.smiles, config.seed, *geometries[item.name], f"substrate '{item.name}'")
        except StructureError as err:
            raise located_error(StructureError, err, config_path, f"substrates.{index}.geometry", text) from err


def warn_sizes(jobs) -> int:
    """Log a warning for every (job label, substrate SMILES, base SMILES) too large to finish overnight; return how many."""
    import logging

    from elimscan.chem.inputcheck import size_warning
    from elimscan.errors import StructureError

    warned = 0
    for label, substrate_smiles, base_smiles in jobs:
        try:
            warning = size_warning(substrate_smiles, base_smiles, label)
        except StructureError:  # a bad row: its job fails on its own input
            continue
        if warning is not None:
            logging.getLogger("elimscan").warning("%s", warning)
            warned += 1
    return warned
