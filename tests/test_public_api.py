"""The public API a notebook user drives one job with (names listed in ``elimscan.__all__``)."""

from __future__ import annotations

import subprocess
import sys

import elimscan
from toyjobs import TOY_SETTINGS, ToyJobEngine


def test_every_public_name_resolves_and_is_documented():
    for name in elimscan.__all__:
        value = getattr(elimscan, name)
        assert name == "__version__" or (getattr(value, "__doc__", None) or "").strip(), name


def test_importing_elimscan_loads_no_backend_and_no_numpy():
    # the thread settings must still be possible after `import elimscan` (see engines/threads.py)
    code = "import sys, elimscan; print(sorted(m for m in ('numpy', 'tblite', 'xtb', 'pyscf') if m in sys.modules))"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "[]"


def test_one_job_in_five_lines_as_the_readme_shows():
    from elimscan import compute_run, parse_config

    config = parse_config(TOY_SETTINGS + "substrates: [{name: 2-chloropropane, smiles: 'CC(C)Cl'}]\n"
                          "bases: [{name: methoxide}]\n")
    result, files = compute_run(config, ToyJobEngine())
    (job,) = result.jobs
    assert job.status == "ok" and job.job_key and job.solvent is not None
    assert sum(p.fraction for p in job.products if p.fraction is not None) > 0.99
    assert any(name.endswith(".xyz") for name in files)
