"""Config reading: every bad input names its key path and YAML line; defaults resolve in one place."""

from __future__ import annotations

import pytest

from elimscan.config import DEFAULT_SEED, parse_config
from elimscan.errors import ConfigError, ExitCode

GOOD = """\
name: demo-run
method: {hamiltonian: GFN2-xTB, backend: tblite, solvent: {model: alpb, name: ethanol}, temperature_K: 298.15}
substrates:
  - {name: my-chloride, smiles: "C[C@H](Cl)CC"}
bases:
  - {name: ethoxide, smiles: "CC[O-]"}
"""


def test_the_documented_example_parses_with_defaults_filled_in():
    config = parse_config(GOOD)
    assert config.method.solvent.name == "ethanol"
    assert config.seed == DEFAULT_SEED
    assert config.optimizer.name in {"bfgs", "sella"}
    assert [(s.name, b.name) for s, b in config.jobs()] == [("my-chloride", "ethoxide")]


def test_jobs_are_the_cross_product_unless_pairs_are_given():
    text = GOOD + "  - {name: tbuo, smiles: 'CC(C)(C)[O-]'}\n"
    assert len(parse_config(text).jobs()) == 2
    paired = text + "pairs:\n  - {substrate: my-chloride, base: tbuo}\n"
    assert [(s.name, b.name) for s, b in parse_config(paired).jobs()] == [("my-chloride", "tbuo")]


def test_config_is_frozen():
    config = parse_config(GOOD)
    with pytest.raises(Exception):
        config.name = "changed"  # type: ignore[misc]


@pytest.mark.parametrize(
    "text, key_path, line, words",
    [
        (GOOD.replace('smiles: "CC[O-]"', 'smiles: "CC[O-]", bulkyy: true'), "bases.0.bulkyy", 6, "did you mean 'bulky'"),
        (GOOD.replace("temperature_K: 298.15", "temperature_K: -5"), "method.temperature_K", 2,
         "temperature -5 K is outside 150-1000 K"),
        (GOOD.replace("temperature_K: 298.15", "temperature_K: 0"), "method.temperature_K", 2,
         "temperature 0 K is outside 150-1000 K"),
        (GOOD.replace("temperature_K: 298.15", "temperature_K: warm"), "method.temperature_K", 2, "valid number"),
        (GOOD.replace("backend: tblite", "backend: xtb"), "method", 2, "backend 'xtb' cannot do solvent model 'alpb'"),
        (GOOD.replace("name: ethanol", "name: ethanoll"), "method", 2, "no ALPB parameters for solvent 'ethanoll'"),
        (GOOD.replace("  - {name: my-chloride, smiles: \"C[C@H](Cl)CC\"}\n", "  []\n").replace("substrates:\n  []", "substrates: []"),
         "substrates", 3, "at least 1 item"),
        (GOOD + "  - {name: ethoxide, smiles: 'CCO[O-]'}\n", "bases", 6, "duplicate name 'ethoxide' (entries 0 and 1"),
        (GOOD.replace("  - {name: my-chloride", "  - {nam: my-chloride"), "substrates.0.nam", 4, "did you mean 'name'"),
        (GOOD + "pairs:\n  - {substrate: other, base: ethoxide}\n", "(top level)", 1, "unknown substrate 'other'"),
        (GOOD.replace("name: demo-run", "nmae: demo-run"), "nmae", 1, "did you mean 'name'"),
    ],
)
def test_bad_values_name_key_path_and_line(text, key_path, line, words):
    with pytest.raises(ConfigError) as info:
        parse_config(text, source="run.yaml")
    err = info.value
    assert err.key_path == key_path
    assert err.line == line
    assert words in str(err)
    assert err.exit_code == ExitCode.CONFIG


def test_yaml_syntax_error_names_the_line():
    with pytest.raises(ConfigError, match="YAML syntax error") as info:
        parse_config(GOOD.replace("bases:", "bases: [", 1), source="run.yaml")
    assert info.value.line is not None and info.value.line >= 5


def test_a_repeated_key_is_an_error_not_a_silent_overwrite():
    with pytest.raises(ConfigError, match="appears twice") as info:
        parse_config(GOOD + "name: second\n")
    assert info.value.line == 7


def test_empty_and_non_mapping_configs_are_refused():
    with pytest.raises(ConfigError, match="empty"):
        parse_config("")
    with pytest.raises(ConfigError, match="mapping"):
        parse_config("- a\n- b\n")


def test_solvent_aliases_resolve_to_canonical_names():
    config = parse_config(GOOD.replace("model: alpb, name: ethanol", "model: gbsa, name: H2O"))
    from elimscan.engines.xtb import EngineSettings

    assert EngineSettings.from_method(config.method).solvent_name == "water"


def test_built_in_bases_need_no_smiles():
    config = parse_config(GOOD.replace('{name: ethoxide, smiles: "CC[O-]"}', "{name: tert-butoxide}"))
    assert config.bases[0].smiles == "CC(C)(C)[O-]"
    with pytest.raises(ConfigError, match="needs a smiles") as info:
        parse_config(GOOD.replace('{name: ethoxide, smiles: "CC[O-]"}', "{name: superbase}"))
    assert info.value.key_path == "bases.0" and info.value.line == 6


def test_base_models_parse_and_an_unknown_counter_ion_names_its_key():
    text = GOOD.replace('{name: ethoxide, smiles: "CC[O-]"}',
                        '{name: ethoxide, smiles: "CC[O-]", model: {counter_ion: K, explicit: 1}}')
    model = parse_config(text).bases[0].model
    assert (model.counter_ion, model.explicit, model.explicit_smiles) == ("K", 1, None)
    with pytest.raises(ConfigError) as info:
        parse_config(text.replace("counter_ion: K", "counter_ion: Cs"))
    assert info.value.key_path.startswith("bases.0.model.counter_ion")


def test_the_gradient_budget_is_bounded_and_null_means_no_limit():
    from elimscan.config import MAX_GRADIENT_BUDGET_PER_ATOM

    assert parse_config(GOOD).paths.gradient_budget_per_atom == 200.0
    assert parse_config(GOOD + "paths: {gradient_budget_per_atom: null}\n").paths.gradient_budget_per_atom is None
    for bad in (0, -5, MAX_GRADIENT_BUDGET_PER_ATOM * 2):
        with pytest.raises(ConfigError) as info:
            parse_config(GOOD + f"paths: {{gradient_budget_per_atom: {bad}}}\n", source="run.yaml")
        assert info.value.key_path == "paths.gradient_budget_per_atom" and info.value.line == 7


def test_the_complex_screen_is_off_by_default_and_bounded():
    from elimscan.config import MAX_COMPLEX_SCREEN_FMAX_eV_per_A

    assert parse_config(GOOD).paths.complex_screen_fmax_eV_per_A is None
    assert parse_config(GOOD + "paths: {complex_screen_fmax_eV_per_A: 0.05}\n").paths.complex_screen_fmax_eV_per_A == 0.05
    for bad in (0, -0.05, MAX_COMPLEX_SCREEN_FMAX_eV_per_A * 2, '"loose"'):
        with pytest.raises(ConfigError) as info:
            parse_config(GOOD + f"paths: {{complex_screen_fmax_eV_per_A: {bad}}}\n", source="run.yaml")
        assert info.value.key_path == "paths.complex_screen_fmax_eV_per_A" and info.value.line == 7
    assert parse_config(GOOD).paths.complex_screen_window_kcal_mol == 0.0
    with pytest.raises(ConfigError) as info:
        parse_config(GOOD + "paths: {complex_screen_window_kcal_mol: -0.1}\n", source="run.yaml")
    assert info.value.key_path == "paths.complex_screen_window_kcal_mol"


def test_the_complex_optimizer_is_unset_by_default_and_named():
    assert parse_config(GOOD).paths.complex_optimizer is None
    assert parse_config(GOOD + "paths: {complex_optimizer: bfgs}\n").paths.complex_optimizer == "bfgs"
    for name in ("sella", "sella-cartesian"):
        assert parse_config(GOOD + f"paths: {{complex_optimizer: {name}}}\n").paths.complex_optimizer == name
    for bad in ("fire", "BFGS", 1):
        with pytest.raises(ConfigError) as info:
            parse_config(GOOD + f"paths: {{complex_optimizer: {bad}}}\n", source="run.yaml")
        assert info.value.key_path == "paths.complex_optimizer" and info.value.line == 7
