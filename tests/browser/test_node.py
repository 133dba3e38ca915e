"""The bundle's engine under Pyodide in Node.js: the same wheels and lock file the page
loads, and the same report as CPython's somaward.solve (to 1e-12). Source: derived (the
page runs the engine unchanged)."""
from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import pytest

import somaward
from helpers import differences, quick_scenario

pytestmark = pytest.mark.browser

SCRIPT = Path(__file__).with_name("node_solve.mjs")


@pytest.mark.parametrize("end, soma", [("sealed", 20), ("infinite", None), ("killed", 12.5)])
def test_engine_solves_under_pyodide_in_node(site_dir, tmp_path, end, soma):
    node = shutil.which("node")
    if node is None:
        pytest.fail("node not found: install Node.js (Debian: apt-get install nodejs)", pytrace=False)
    scenario = quick_scenario(distance=240, length=520, diameter=1.6, soma_diameter=soma, end=end,
                              Rm=25000, Ri=130, Cm=0.95)
    path = tmp_path / "scenario.json"
    path.write_text(json.dumps(scenario))
    proc = subprocess.run([node, str(SCRIPT), str(site_dir), str(path)], capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr[-2000:] + proc.stdout[-2000:]
    answer = json.loads(proc.stdout.strip().splitlines()[-1])
    assert answer["ok"], answer
    expected = json.loads(json.dumps(somaward.solve(scenario)))
    assert differences(answer["report"], expected) == []
