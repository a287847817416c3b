"""The optional ``experiment:`` entry of a substrate: accepted, or refused with the key path, the line and why.

The observations below are those of the reference benchmark (validation/cases.yaml, copied with their sources);
the loader checks their shape, ``elimscan validate`` checks their SMILES against the substrate's alkenes.
"""

from __future__ import annotations

import pytest

from elimscan.cli import main
from elimscan.config import SUBSTITUTION_PRODUCT, parse_config
from elimscan.errors import ConfigError, ExitCode

#: 2-bromobutane + NaOEt/EtOH: 19 % 1-butene, trans-2-butene major (J. G. Smith, Organic Chemistry; Brown &
#: Klimisch, J. Am. Chem. Soc. 1966, 88, 1425); bromoethane + EtO-: about 1 % ethene at 55 °C (Hughes, Ingold and
#: co-workers, J. Chem. Soc. 1948; from memory)
GOOD = """
substrates:
  - name: 2-bromobutane
    smiles: CCC(C)Br
    experiment:
      ethoxide:
        major: C/C=C/C
        alkene_shares: {C=CCC: 19}
        source: "J. G. Smith, Organic Chemistry; Brown & Klimisch, J. Am. Chem. Soc. 1966, 88, 1425"
        conditions: NaOEt in ethanol
  - name: bromoethane
    smiles: CCBr
    experiment:
      ethoxide: {major: substitution, e2_percent: 1, source: "Hughes, Ingold et al., J. Chem. Soc. 1948 (from memory)"}
bases: [{name: ethoxide}, {name: tert-butoxide}]
"""


def test_observations_are_read_and_name_their_major():
    config = parse_config(GOOD)
    butene = config.substrates[0].experiment["ethoxide"]
    assert butene.alkene_shares == {"C=CCC": 19.0} and butene.expected_major() == "C/C=C/C"
    assert butene.conditions == "NaOEt in ethanol" and not butene.about_substitution()
    ethyl = config.substrates[1].experiment["ethoxide"]
    assert ethyl.expected_major() == SUBSTITUTION_PRODUCT and ethyl.about_substitution()
    assert config.substrates[0].experiment.get("tert-butoxide") is None  # optional per base
    # a partial list of shares names no major: 33 % 1-butene leaves the rest unknown
    partial = parse_config(GOOD.replace("major: C/C=C/C", "conditions: KOtBu").replace("conditions: NaOEt in ethanol", "")
                           .replace("C=CCC: 19", "C=CCC: 33"))
    assert partial.substrates[0].experiment["ethoxide"].expected_major() is None


@pytest.mark.parametrize("old, new, key_path, words", [
    ('source: "J. G. Smith, Organic Chemistry; Brown & Klimisch, J. Am. Chem. Soc. 1966, 88, 1425"', "",
     "substrates.0.experiment.ethoxide.source", "required key 'source' is missing"),
    ("      ethoxide:\n        major", "      ethoxyde:\n        major", "substrates.0.experiment.ethoxyde",
     "names unknown base 'ethoxyde' (known: ethoxide, tert-butoxide)"),
    ("{C=CCC: 19}", "{C=CCC: 19, C/C=C/C: 90}", "substrates.0.experiment.ethoxide",
     "alkene_shares add up to 109 %"),
    ("{C=CCC: 19}", "{C=CCC: -5}", "substrates.0.experiment.ethoxide", "'C=CCC' has -5 %, outside 0 to 100"),
    ("e2_percent: 1,", "e2_percent: 80,", "substrates.1.experiment.ethoxide",
     "major is 'substitution' but e2_percent is 80 %"),
    ("        conditions:", "        sorce: x\n        conditions:", "substrates.0.experiment.ethoxide.sorce",
     "unknown key 'sorce'; did you mean 'source'?"),
    ("{major: substitution, e2_percent: 1, ", "{", "substrates.1.experiment.ethoxide",
     "an experiment needs at least one of 'alkene_shares', 'major' or 'e2_percent'"),
    ("bases: [{name: ethoxide}, {name: tert-butoxide}]",
     "bases: [{name: ethoxide}, {name: tert-butoxide}]\npairs: [{substrate: 2-bromobutane, base: tert-butoxide}, "
     "{substrate: bromoethane, base: ethoxide}]", "substrates.0.experiment.ethoxide",
     "'pairs' has no job of substrate '2-bromobutane' with base 'ethoxide'"),
])
def test_a_bad_observation_names_its_key_path_and_line(old, new, key_path, words):
    assert old in GOOD
    with pytest.raises(ConfigError) as caught:
        parse_config(GOOD.replace(old, new, 1))
    assert caught.value.key_path == key_path and words in str(caught.value), str(caught.value)
    assert caught.value.line is not None and 5 <= caught.value.line <= 16


def test_validate_refuses_an_alkene_the_substrate_cannot_give(tmp_path, capsys):
    # 2-butene without E/Z is no product: elimscan computes E and Z apart, and so must the observation name them
    path = tmp_path / "observed.yaml"
    path.write_text(GOOD.replace("{C=CCC: 19}", "{C=CCC: 19, CC=CC: 81}").replace("        major: C/C=C/C\n", ""))
    code = main(["validate", str(path)])
    err = capsys.readouterr().err
    assert code == ExitCode.CONFIG, err
    assert "key 'substrates.0.experiment.ethoxide.alkene_shares.CC=CC', line 7" in err
    assert "'CC=CC' is no alkene substrate 'CCC(C)Br' can give by E2 (possible: C/C=C/C, C/C=C\\C, C=CCC" in err
    path.write_text(GOOD)
    assert main(["validate", str(path)]) == ExitCode.OK, capsys.readouterr().err
