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


def _in_file(err: ConfigError, path: str) -> ConfigError:
    """Return a config error with the file named once, first, keeping its key path and line."""
    located = ConfigError(f"{path}: " + str(err).replace(f"{path}: ", "", 1))
    located.key_path, located.line = err.key_path, err.line
    return located


def raise_all(problems: list, path: str) -> None:
    """Raise the one problem, or InputProblems listing them all; return when there is none."""
    from elimscan.errors import InputProblems

    if len(problems) == 1:
        raise problems[0]
    if problems:
        raise InputProblems(problems, source=path)


def read_config(path: str):
    """Return the validated config read from a YAML file; raise every problem at once, each naming file, key and line.

    When the config itself is invalid, the molecules whose own entries are valid are checked too (their SMILES,
    leaving group, basic atom), so a bad key and two bad SMILES come out together.
    """
    from elimscan.config import config_problems

    text = read_config_text(path)
    try:
        config, problems, data = config_problems(text, source=path)
    except ConfigError as err:
        raise _in_file(err, path) from err
    if problems:
        located = [_in_file(p, path) for p in problems]
        located += _entry_problems(data, path, text, {p.key_path for p in problems})
        raise_all(sorted(located, key=lambda p: (p.line is None, p.line or 0)), path)
    return config


def _entry_problems(data: dict, path: str, text: str, reported: set) -> list:
    """Return the structure problems of every substrate and base entry that is valid on its own (config invalid)."""
    from pydantic import ValidationError

    from elimscan.config import DEFAULT_SEED, SEED_LIMIT, BaseConfig, SubstrateConfig
    from elimscan.chem.inputcheck import check_base, check_substrate
    from elimscan.errors import StructureError

    seed = data.get("seed")
    seed = seed if isinstance(seed, int) and not isinstance(seed, bool) and 0 <= seed < SEED_LIMIT else DEFAULT_SEED
    found = []
    for role, model in (("substrate", SubstrateConfig), ("base", BaseConfig)):
        entries = data.get(f"{role}s")
        for index, entry in enumerate(entries if isinstance(entries, list) else ()):
            key = f"{role}s.{index}"
            if any(k == key or str(k).startswith(key + ".") for k in reported):
                continue
            try:
                item = model.model_validate(entry)
            except ValidationError:
                continue
            try:
                if role == "substrate":
                    check_substrate(item.smiles, item.charge, item.multiplicity, f"substrate '{item.name}'", seed)
                else:
                    check_base(item.smiles, item.charge, item.multiplicity, f"base '{item.name}'")
            except StructureError as err:
                found.append(located_error(StructureError, err, path, f"{key}.smiles", text))
    return found


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


def check_inputs(config, config_path: str) -> dict[str, tuple[str, str]]:
    """Return the substrates' geometry files {name: (text, format)}; raise every input problem of a run at once.

    Substrates are perceived in full (leaving group, maps, beta hydrogens), no base may be its job's substrate,
    bases need a basic atom, base models are built, geometry files are read and matched: all before any
    calculation, each problem naming the file, the key path and the YAML line.
    """
    text = _config_text(config_path)
    problems = structure_problems(config, config_path, text)
    geometries, unread = read_geometry_files(config, config_path, text)
    problems += unread + model_problems(config, config_path, text, geometries, {p.key_path for p in problems})
    raise_all(sorted(problems, key=lambda p: (p.line is None, p.line or 0)), config_path)
    return geometries


def check_batch_inputs(config, config_path: str):
    """Return the batch plan of a config; raise every problem of its YAML molecules, models and files at once.

    A bad row of the substrates file is no input error: it fails only its own job (see the plan).
    """
    text = _config_text(config_path)
    problems = structure_problems(config, config_path, text, jobs=False)
    geometries, unread = read_geometry_files(config, config_path, text)
    problems += unread + model_problems(config, config_path, text, geometries, {p.key_path for p in problems})
    raise_all(sorted(problems, key=lambda p: (p.line is None, p.line or 0)), config_path)
    return plan_located(config, config_path), geometries


def check_structures(config, config_path: str) -> None:
    """Raise every problem of the config's substrates and bases at once (StructureError alone, else InputProblems)."""
    raise_all(structure_problems(config, config_path, _config_text(config_path)), config_path)


def structure_problems(config, config_path: str, text: str, jobs: bool = True) -> list:
    """Return the located problems of every substrate and base of a config (``jobs``: pairs and gas phase too)."""
    from elimscan.chem.basemodels import resolve_base_model
    from elimscan.chem.inputcheck import (check_base, check_pair, check_substrate, gas_phase_ion_problem,
                                          modelled_charge)
    from elimscan.errors import StructureError

    problems = []
    charges: dict[str, int] = {}
    for index, item in enumerate(config.substrates):
        try:
            charge = check_substrate(item.smiles, item.charge, item.multiplicity, f"substrate '{item.name}'", config.seed)
        except StructureError as err:
            problems.append(located_error(StructureError, err, config_path, f"substrates.{index}.smiles", text))
            continue
        charges[f"substrate '{item.name}'"] = charge
    base_index = {b.name: i for i, b in enumerate(config.bases)}
    bad_bases = set()
    for substrate, base in config.jobs() if jobs else ():
        try:
            check_pair(substrate.name, substrate.smiles, base.name, base.smiles)
        except StructureError as err:
            problems.append(located_error(StructureError, err, config_path, f"bases.{base_index[base.name]}.smiles", text))
            bad_bases.add(base.name)
    for index, item in enumerate(config.bases):
        if item.name in bad_bases:
            continue
        try:
            charge = check_base(item.smiles, item.charge, item.multiplicity, f"base '{item.name}'")
        except StructureError as err:
            problems.append(located_error(StructureError, err, config_path, f"bases.{index}.smiles", text))
            continue
        solvent = config.method.solvent
        charges[f"base '{item.name}'"] = modelled_charge(
            charge, resolve_base_model(item, solvent.model, solvent.name).counter_ion)
    problem = gas_phase_ion_problem(config.method.solvent.model, charges) if jobs else None
    if problem is not None:
        problems.append(located_error(ConfigError, problem, config_path, "method.solvent.model", text))
    return problems


def batch_only(config) -> list[str]:
    """Return the batch-only keys a config uses (substrates_file, solvents)."""
    return [key for key in ("substrates_file", "solvents") if getattr(config, key) is not None]


def check_models(config, config_path: str, geometries: dict[str, tuple[str, str]]) -> None:
    """Raise every problem of the base models and geometry files at once (StructureError alone, else InputProblems)."""
    raise_all(model_problems(config, config_path, _config_text(config_path), geometries), config_path)


def read_geometry_files(config, config_path: str, text: str) -> tuple[dict[str, tuple[str, str]], list]:
    """Return ({substrate name: (file text, 'sdf' | 'xyz')}, the located problems of files that cannot be read)."""
    from pathlib import Path

    folder = Path(config_path).parent
    found, problems = {}, []
    for index, item in enumerate(config.substrates):
        if item.geometry is None:
            continue
        path = Path(item.geometry) if Path(item.geometry).is_absolute() else folder / item.geometry
        try:
            found[item.name] = (path.read_text(encoding="utf-8"), "xyz" if path.suffix.lower() == ".xyz" else "sdf")
        except (OSError, UnicodeDecodeError) as err:
            why = getattr(err, "strerror", None) or err
            problems.append(located_error(ConfigError, f"substrate '{item.name}': cannot read geometry file '{path}': "
                                          f"{why}", config_path, f"substrates.{index}.geometry", text))
    return found, problems


def model_problems(config, config_path: str, text: str, geometries: dict[str, tuple[str, str]],
                   reported: set | None = None) -> list:
    """Return the located problems of base models and geometry files that cannot be used (molecules whose SMILES
    key is in ``reported`` are left out: their problem is listed already).

    Both would otherwise fail only after the substrate or base is computed: the base model is built as the
    calculation builds it, and each geometry file is matched to its substrate's SMILES.
    """
    from elimscan.chem.basemodels import resolve_base_model
    from elimscan.chem.inputcheck import check_base_model, check_explicit_smiles, check_geometry
    from elimscan.errors import StructureError

    problems = []
    reported = reported or set()
    solvents = config.solvents or (config.method.solvent,)
    for index, item in enumerate(config.bases):
        if f"bases.{index}.smiles" in reported:
            continue
        key = f"bases.{index}.model.explicit_smiles"
        try:
            if item.model.explicit_smiles is not None:
                check_explicit_smiles(item.model.explicit_smiles, item.name)
            key = f"bases.{index}.model"
            # the model as each solvent resolves it (the default differs between protic and aprotic solvents)
            models = dict.fromkeys((m.counter_ion, m.explicit, m.explicit_smiles)
                                   for m in (resolve_base_model(item, s.model, s.name) for s in solvents))
            for counter_ion, explicit, explicit_smiles in models:
                check_base_model(item.smiles, item.charge, item.multiplicity, counter_ion, explicit, explicit_smiles,
                                 config.seed, item.name)
        except StructureError as err:
            problems.append(located_error(StructureError, err, config_path, key, text))
    from elimscan.chem.inputcheck import experiment_alkene_problem
    for index, item in enumerate(config.substrates):
        if f"substrates.{index}.smiles" in reported:
            continue
        for base, observed in item.experiment.items():
            problem = experiment_alkene_problem(item.smiles, observed, config.seed)
            if problem is not None:
                problems.append(located_error(ConfigError, problem[1], config_path,
                                              f"substrates.{index}.experiment.{base}.{problem[0]}", text))
    for index, item in enumerate(config.substrates):
        if item.name not in geometries or f"substrates.{index}.smiles" in reported:
            continue
        try:
            check_geometry(item.smiles, config.seed, *geometries[item.name], f"substrate '{item.name}'")
        except StructureError as err:
            problems.append(located_error(StructureError, err, config_path, f"substrates.{index}.geometry", text))
    return problems


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
