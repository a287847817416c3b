"""The engine extension point: a factory named 'module:function' on the command line or in the config.

``tests/support/plugin_engine.py`` implements the Engine contract in about 30 lines, as a plug-in author
would; these tests run elimscan on it and check what elimscan promises around it (not the chemistry).
"""

from __future__ import annotations

import json

import pytest

from elimscan.cli import main
from elimscan.config import MethodConfig
from elimscan.engines.contract import Engine
from elimscan.engines.factory import make_engine
from elimscan.errors import ConfigError, EngineError, ExitCode
from toyjobs import TOY_SETTINGS

CONFIG = TOY_SETTINGS + """\
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide}
"""


def test_a_plugin_engine_satisfies_the_contract_and_computes_a_whole_run(tmp_path, capsys):
    engine = make_engine(MethodConfig(), "plugin_engine:make")
    assert isinstance(engine, Engine)
    (tmp_path / "run.yaml").write_text(CONFIG)
    code = main(["run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "out"), "--engine", "plugin_engine:make"])
    err = capsys.readouterr().err
    assert code in (ExitCode.OK, ExitCode.JOBS_FAILED), err  # known failures of a pair potential are data
    document = json.loads((tmp_path / "out" / "results.json").read_text())
    assert document["config"]["method"]["engine_factory"] == "plugin_engine:make"
    assert document["provenance"]["method_label"].startswith("plug-in engine plugin_engine:make")
    assert [job["status"] for job in document["jobs"]] in (["ok"], ["failed"])
    assert "Traceback" not in err


def test_the_engine_factory_in_the_config_is_used_like_the_option(tmp_path, capsys):
    (tmp_path / "run.yaml").write_text("method: {engine_factory: 'plugin_engine:make'}\n" + CONFIG)
    assert main(["plan", str(tmp_path / "run.yaml")]) == ExitCode.OK, capsys.readouterr().err


def test_an_engine_that_lacks_a_member_of_the_contract_is_refused_by_name():
    with pytest.raises(EngineError, match="lacks single_point"):
        make_engine(MethodConfig(), "plugin_engine:incomplete")


@pytest.mark.parametrize("spec,words", [("plugin_engine:nothing", "has no function 'nothing'"),
                                        ("no_such_module_here:make", "cannot import module 'no_such_module_here'")])
def test_a_factory_that_cannot_be_loaded_is_an_input_error(spec, words):
    with pytest.raises(ConfigError, match=words):
        make_engine(MethodConfig(), spec)


def test_validate_refuses_an_engine_option_that_is_not_module_colon_function(tmp_path, capsys):
    (tmp_path / "run.yaml").write_text(CONFIG)
    assert main(["plan", str(tmp_path / "run.yaml"), "--engine", "not a factory"]) == ExitCode.CONFIG
    assert "expected 'module:function'" in capsys.readouterr().err
