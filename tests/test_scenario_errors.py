"""Every error path of ``somaward.validate`` / ``solve`` (issue 2 step 5): a ScenarioError whose
message is one line, starts with the JSON path of the offending field and words the rule.

Common practice, no source: these are contract tests of the engine's wording, not physics. The
base scenario is the invented example cell of DEVELOPERS.md (with a killed tuft end).
"""

import copy
import math
import re

import pytest

import somaward
from somaward import ScenarioError

BASE = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
        "branches": [{"id": "trunk", "parent": None, "length": 400, "diameter": 3.0},
                     {"id": "tuft", "parent": "trunk", "length": 300, "diameter": 1.0, "end": "killed"},
                     {"id": "taper", "parent": "trunk",
                      "cylinders": [{"length": 50, "diameter": 2}, {"length": 50, "diameter": 1}]}],
        "synapse": {"branch": "tuft", "distance": 250}}


def _set(path, value):
    def edit(sc):
        *head, last = path
        node = sc
        for key in head:
            node = node[key]
        node[last] = value
    return edit


def _pop(path):
    def edit(sc):
        *head, last = path
        node = sc
        for key in head:
            node = node[key]
        del node[last]
    return edit


CASES = [
    # (id, edit, JSON path the message starts with, regex on the rest)
    ("unknown_parent_did_you_mean", _set(["branches", 1, "parent"], "trnk"), "branches[1].parent",
     r"no branch has id 'trnk'; did you mean 'trunk'\?"),
    ("own_parent", _set(["branches", 1, "parent"], "tuft"), "branches[1].parent", r"cannot be its own parent"),
    ("duplicate_id", _set(["branches", 2, "id"], "tuft"), "branches[2].id",
     r"duplicate id 'tuft' \(also branches\[1\]\)"),
    ("cycle", _set(["branches", 0, "parent"], "taper"), "branches[0].parent",
     r"loops back on itself \(trunk → taper → trunk\)"),
    ("synapse_beyond_end", _set(["synapse", "distance"], 300.5), "synapse.distance",
     r"must be ≤ 300 µm \(the length of branch 'tuft'\), got 300.5"),
    ("synapse_on_killed_end", _set(["synapse", "distance"], 300), "synapse.distance", r"killed end of 'tuft'"),
    ("synapse_unknown_branch", _set(["synapse", "branch"], "tuf"), "synapse.branch",
     r"no branch has id 'tuf'; did you mean 'tuft'\?"),
    ("path_not_terminal", _set(["synapse"], {"path": "trunk", "path_distance": 10}), "synapse.path",
     r"must name a terminal branch; 'trunk' has child branches"),
    ("path_unknown", _set(["synapse"], {"path": "tapr", "path_distance": 10}), "synapse.path",
     r"no branch has id 'tapr'; did you mean 'taper'\?"),
    ("path_distance_too_long", _set(["synapse"], {"path": "taper", "path_distance": 501}), "synapse.path_distance",
     r"must be ≤ 500 µm \(the path length from the soma to the end of 'taper'\), got 501"),
    ("path_on_killed_end", _set(["synapse"], {"path": "tuft", "path_distance": 700}), "synapse.path_distance",
     r"killed end"),
    ("negative_diameter", _set(["branches", 0, "diameter"], -1), "branches[0].diameter", r"must be > 0 µm, got -1$"),
    ("zero_length", _set(["branches", 0, "length"], 0), "branches[0].length", r"must be > 0 µm, got 0$"),
    ("zero_section_diameter", _set(["branches", 2, "cylinders", 1, "diameter"], 0.0),
     "branches[2].cylinders[1].diameter", r"must be > 0 µm"),
    ("negative_Rm", _set(["membrane", "Rm"], -5), "membrane.Rm", r"must be > 0 Ω·cm²"),
    ("zero_Cm", _set(["membrane", "Cm"], 0), "membrane.Cm", r"must be > 0 µF/cm²"),
    ("negative_soma", _set(["soma"], {"diameter": -3}), "soma.diameter", r"must be > 0 µm"),
    ("negative_distance", _set(["synapse", "distance"], -1), "synapse.distance", r"must be ≥ 0 µm"),
    ("nan", _set(["branches", 0, "diameter"], math.nan), "branches[0].diameter",
     r"must be a finite number \(µm\), got nan"),
    ("inf", _set(["membrane", "Ri"], math.inf), "membrane.Ri", r"must be a finite number \(Ω·cm\), got inf"),
    ("minus_inf_frequency", _set(["frequencies_hz"], [0, -math.inf]), "frequencies_hz[1]", r"finite number"),
    ("bool_as_number", _set(["membrane", "Rm"], True), "membrane.Rm", r"must be a number \(Ω·cm²\), got true"),
    ("bool_as_length", _set(["branches", 0, "length"], False), "branches[0].length", r"must be a number"),
    ("string_as_number", _set(["membrane", "Rm"], "20000"), "membrane.Rm", r"must be a number \(Ω·cm²\), got '20000'"),
    ("list_as_number", _set(["branches", 0, "length"], [1]), "branches[0].length", r"must be a number \(µm\)"),
    ("frequencies_not_list", _set(["frequencies_hz"], "x"), "frequencies_hz", r"must be a list, got 'x'"),
    ("frequency_too_high", _set(["frequencies_hz"], [2e6]), "frequencies_hz[0]", r"must be ≤ 1000000 Hz"),
    ("id_not_string", _set(["branches", 0, "id"], 7), "branches[0].id", r"must be a string"),
    ("empty_id", _set(["branches", 0, "id"], ""), "branches[0].id", r"must not be empty"),
    ("unknown_key_top", _set(["synaps"], {}), "synaps", r"unknown key; did you mean 'synapse'\?"),
    ("unknown_key_membrane", _set(["membrane", "Rn"], 1), "membrane.Rn", r"unknown key.*allowed here: Rm, Ri, Cm"),
    ("unknown_key_branch", _set(["branches", 0, "lenght"], 3), "branches[0].lenght",
     r"unknown key; did you mean 'length'\?"),
    ("unknown_key_soma", _set(["soma", "diam"], 3), "soma.diam", r"unknown key; did you mean 'diameter'\?"),
    ("missing_membrane", _pop(["membrane"]), "scenario", r"missing required key 'membrane'"),
    ("missing_Ri", _pop(["membrane", "Ri"]), "membrane", r"missing required key 'Ri'"),
    ("missing_diameter", _pop(["branches", 0, "diameter"]), "branches[0]", r"missing required key 'diameter'"),
    ("missing_distance", _pop(["synapse", "distance"]), "synapse", r"missing required key 'distance'"),
    ("end_on_non_terminal", _set(["branches", 0, "end"], "sealed"), "branches[0].end",
     r"only terminal branches take an end condition; 'trunk' has child branches"),
    ("bad_end_value", _set(["branches", 1, "end"], "seald"), "branches[1].end",
     r"must be one of 'sealed', 'killed', 'infinite', got 'seald'; did you mean 'sealed'\?"),
    ("bad_end_load", _set(["branches", 1, "end"], {"G": -1}), "branches[1].end.G", r"must be ≥ 0 nS, got -1"),
    ("end_wrong_type", _set(["branches", 1, "end"], 3), "branches[1].end",
     r"must be 'sealed', 'killed', 'infinite' or an object"),
    ("length_and_cylinders", _set(["branches", 0, "cylinders"], [{"length": 1, "diameter": 1}]), "branches[0]",
     r"give either 'length' and 'diameter', or 'cylinders'"),
    ("empty_cylinders", _set(["branches", 2, "cylinders"], []), "branches[2].cylinders", r"at least 1 item"),
    ("no_branches", _set(["branches"], []), "branches", r"at least 1 item"),
    ("soma_wrong_type", _set(["soma"], 5), "soma", r"must be null \(no soma\) or an object with 'diameter'; got 5"),
    ("dual_exp_decay_le_rise", _set(["synapse", "current"],
                                    {"shape": "dual_exponential", "tau_rise": 2, "tau_decay": 1, "peak": 5}),
     "synapse.current.tau_decay", r"must be > tau_rise \(2 ms\), got 1"),
    ("dual_exp_decay_eq_rise", _set(["synapse", "current"],
                                    {"shape": "dual_exponential", "tau_rise": 2, "tau_decay": 2, "peak": 5}),
     "synapse.current.tau_decay", r"must be > tau_rise"),
    ("bad_current_shape", _set(["synapse", "current"], {"shape": "alpah", "tau": 1, "peak": 1}),
     "synapse.current.shape", r"did you mean 'alpha'\?"),
    ("alpha_negative_tau", _set(["synapse", "current"], {"shape": "alpha", "tau": -1, "peak": 1}),
     "synapse.current.tau", r"must be > 0 ms"),
    ("map_spacing_too_fine", _set(["map_spacing_um"], 1e-4), "map_spacing_um",
     r"too fine for this tree: more than 2,000,000 map points"),
    ("map_spacing_zero", _set(["map_spacing_um"], 0), "map_spacing_um", r"must be > 0 µm"),
    ("scenario_not_object", None, "scenario", r"must be a JSON object"),
]


@pytest.mark.parametrize("edit, path, rule", [c[1:] for c in CASES], ids=[c[0] for c in CASES])
@pytest.mark.parametrize("entry", [somaward.validate, somaward.solve], ids=["validate", "solve"])
def test_error_message(entry, edit, path, rule):
    """The error names the JSON path first, on one line, then the rule (issue 2 step 5)."""
    if edit is None:
        sc = [BASE]
    else:
        sc = copy.deepcopy(BASE)
        edit(sc)
    with pytest.raises(ScenarioError, match="^" + re.escape(path) + ": .*" + rule) as info:
        entry(sc)
    msg = str(info.value)
    assert "\n" not in msg
    assert msg.startswith(path + ": ")
    assert info.value.path == path
    assert isinstance(info.value, ValueError)


def test_base_scenario_is_valid():
    """The base is accepted, so each failure above comes from its one edit."""
    somaward.validate(copy.deepcopy(BASE))


def test_old_key_sections_still_opens():
    """Issue 8: files, links and autosaves written before the rename use 'sections' for a branch's
    cylinders; they open, with one warning naming the new key, and give the same report and
    fingerprint as the renamed file (common practice, no source: a contract test)."""
    old = copy.deepcopy(BASE)
    old["branches"][2]["sections"] = old["branches"][2].pop("cylinders")
    new_report, old_report = somaward.solve(BASE), somaward.solve(old)
    assert old_report["scenario"] == new_report["scenario"]
    assert "sections" not in json_text(old_report["scenario"])
    (warning,) = [w for w in old_report["warnings"] if "sections" in w]
    assert "of branch 'taper' was read as 'cylinders'" in warning and "\n" not in warning
    assert old_report["attenuation"] == new_report["attenuation"]
    assert somaward.validate(old) == somaward.validate(BASE)
    both = copy.deepcopy(old)
    both["branches"][2]["cylinders"] = both["branches"][2]["sections"]
    with pytest.raises(ScenarioError, match=r"^branches\[2\]\.sections: unknown key"):
        somaward.validate(both)


def json_text(value):
    import json
    return json.dumps(value)
