"""The steady-state and frequency path needs numpy only (issue 2; style.md "Lazy scipy").

In a fresh interpreter a meta path finder refuses 'scipy' and 'scipy.*'; importing somaward and
a full solve must still work, and scipy must never have been imported. The scenario is invented.
"""

import json
import subprocess
import sys
import textwrap

CHILD = textwrap.dedent('''
    import json, math, sys

    class NoScipy:
        def find_spec(self, name, path=None, target=None):
            if name == "scipy" or name.startswith("scipy."):
                raise ImportError(f"scipy is blocked in this test ({name})")
            return None

    sys.meta_path.insert(0, NoScipy())
    try:
        import scipy  # noqa: F401
    except ImportError:
        pass
    else:
        raise SystemExit("the blocker did not block scipy")

    import somaward
    sc = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
          "branches": [{"id": "trunk", "parent": None, "length": 400, "diameter": 3.0},
                       {"id": "tuft", "parent": "trunk", "length": 300, "diameter": 1.0, "end": "sealed"},
                       {"id": "taper", "parent": "trunk", "cylinders": [{"length": 50, "diameter": 2},
                                                                       {"length": 50, "diameter": 1}]}],
          "synapse": {"branch": "tuft", "distance": 250,
                      "current": {"shape": "alpha", "tau": 0.5, "peak": 50}}}
    r = somaward.solve(sc)
    print(json.dumps({"scipy_loaded": any(m == "scipy" or m.startswith("scipy.") for m in sys.modules),
                      "site_to_soma": r["attenuation"]["steady_state"]["site_to_soma"],
                      "n_freq": len(r["frequency_response"]["frequencies_hz"]),
                      "json": len(json.dumps(r, allow_nan=False))}))
''')


def test_solve_without_scipy():
    """import somaward + solve succeed with scipy unimportable; 'scipy' not in sys.modules."""
    out = subprocess.run([sys.executable, "-c", CHILD], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    info = json.loads(out.stdout.strip().splitlines()[-1])
    assert info["scipy_loaded"] is False
    assert 0.0 < info["site_to_soma"] < 1.0          # checks.md conventions: 0 < A ≤ 1
    assert info["n_freq"] > 1 and info["json"] > 0
