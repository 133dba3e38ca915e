"""The published scenario schema and the engine's pure-Python validator agree (issue 2 step 3).

Source: the independent library ``jsonschema`` (Draft 2020-12). Generated scenarios are invented; they are
semantically valid (unique ids, existing parents, synapse inside its branch and not on a killed
end, ends only on terminals, finite numbers, map spacing not too fine), because those rules are
outside the schema. Structural mutations are then applied and both validators must accept or
reject the same scenario.
"""

import copy
import math

import jsonschema
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import somaward
from somaward import ScenarioError
from somaward.scenario import load_schema

SCHEMA = load_schema()
VALIDATOR = jsonschema.Draft202012Validator(SCHEMA)
SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def test_schema_is_valid_draft_2020_12():
    """The published schema passes jsonschema's meta-schema check (Draft 2020-12)."""
    assert SCHEMA["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(SCHEMA)


def _pos(lo=0.1, hi=500.0):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False)


ENDS = st.one_of(st.sampled_from(["sealed", "killed", "infinite"]),
                 st.fixed_dictionaries({"G": _pos(0.0, 10.0)}, optional={"C": _pos(0.0, 10.0)}))
CURRENTS = st.one_of(
    st.fixed_dictionaries({"shape": st.just("alpha"), "tau": _pos(0.01, 10), "peak": _pos(-100, 100)}),
    st.builds(lambda r, extra, p: {"shape": "dual_exponential", "tau_rise": r, "tau_decay": r + extra, "peak": p},
              _pos(0.01, 5), _pos(0.01, 5), _pos(-100, 100)))


@st.composite
def valid_scenarios(draw):
    n = draw(st.integers(1, 6))
    branches, children = [], [[] for _ in range(n)]
    for i in range(n):
        parent = None if i == 0 else draw(st.one_of(st.none(), st.integers(0, i - 1)))
        if parent is not None:
            children[parent].append(i)
        b = {"id": f"b{i}", "parent": None if parent is None else f"b{parent}"}
        if draw(st.booleans()):
            b.update(length=draw(_pos(1, 300)), diameter=draw(_pos(0.1, 5)))
        else:
            b["cylinders"] = [{"length": draw(_pos(1, 300)), "diameter": draw(_pos(0.1, 5))}
                             for _ in range(draw(st.integers(1, 3)))]
        branches.append(b)
    for i, b in enumerate(branches):
        if not children[i] and draw(st.booleans()):
            b["end"] = draw(ENDS)
    length = lambda b: sum(s["length"] for s in b.get("cylinders", [b]))  # noqa: E731
    j = draw(st.integers(0, n - 1))
    killed = branches[j].get("end") == "killed"
    frac = draw(st.floats(0.0, 0.9 if killed else 1.0))
    if draw(st.booleans()) or children[j]:
        syn = {"branch": f"b{j}", "distance": frac * length(branches[j])}
    else:                                      # by path to the terminal j
        total, i = 0.0, j
        while i is not None:
            total += length(branches[i])
            p = branches[i]["parent"]
            i = None if p is None else int(p[1:])
        syn = {"path": f"b{j}", "path_distance": total - (1 - frac) * length(branches[j])}
        if killed:
            syn["path_distance"] = min(syn["path_distance"], total - 0.1 * length(branches[j]))
    if draw(st.booleans()):
        syn["current"] = draw(CURRENTS)
    membrane = {"Rm": draw(_pos(1000, 100000)), "Ri": draw(_pos(50, 400))}
    if draw(st.booleans()):
        membrane["Cm"] = draw(_pos(0.3, 3))
    sc = {"membrane": membrane, "branches": branches, "synapse": syn}
    soma = draw(st.sampled_from(["absent", "null", "d", "d+Rm"]))
    if soma != "absent":
        sc["soma"] = None if soma == "null" else {"diameter": draw(_pos(2, 40))}
        if soma == "d+Rm":
            sc["soma"]["Rm"] = draw(_pos(500, 100000))
    opt = draw(st.fixed_dictionaries({}, optional={
        "title": st.text(max_size=20), "notes": st.text(max_size=20),
        "frequencies_hz": st.lists(_pos(0.0, 1e6), min_size=1, max_size=5),
        "map_spacing_um": _pos(5.0, 1000.0), "map_frequency_hz": _pos(0.0, 1e6)}))
    sc.update(opt)
    return sc


BAD_TYPES = st.sampled_from(["x", True, False, None, [1.0], {"a": 1}])


def _objects(sc):
    """(json path, object) of every object in the scenario."""
    out = [("", sc), ("membrane", sc["membrane"]), ("synapse", sc["synapse"])]
    if isinstance(sc.get("soma"), dict):
        out.append(("soma", sc["soma"]))
    if "current" in sc["synapse"]:
        out.append(("current", sc["synapse"]["current"]))
    for b in sc["branches"]:
        out.append(("branch", b))
        out.extend(("cylinder", s) for s in b.get("cylinders", []))
        if isinstance(b.get("end"), dict):
            out.append(("end", b["end"]))
    return out


def _numbers(sc):
    """(container, key, kind) of every number; kind 'pos' (> 0) or 'nonneg' (≥ 0) or 'any'."""
    out = [(sc["membrane"], k, "pos") for k in sc["membrane"]]
    syn = sc["synapse"]
    out.append((syn, "distance" if "distance" in syn else "path_distance", "nonneg"))
    if isinstance(sc.get("soma"), dict):
        out.extend((sc["soma"], k, "pos") for k in sc["soma"])
    cur = syn.get("current")
    if cur:
        out.extend((cur, k, "any" if k == "peak" else "pos") for k in cur if k != "shape")
    for b in sc["branches"]:
        for s in b.get("cylinders", [b]):
            out.extend([(s, "length", "pos"), (s, "diameter", "pos")])
        if isinstance(b.get("end"), dict):
            out.extend((b["end"], k, "nonneg") for k in b["end"])
    for k in ("map_spacing_um",):
        if k in sc:
            out.append((sc, k, "pos"))
    if "map_frequency_hz" in sc:
        out.append((sc, "map_frequency_hz", "nonneg"))
    if "frequencies_hz" in sc:
        out.extend((sc["frequencies_hz"], i, "nonneg") for i in range(len(sc["frequencies_hz"])))
    return out


@st.composite
def mutated(draw):
    """A valid scenario and one structural mutation (or none)."""
    sc = draw(valid_scenarios())
    kind = draw(st.sampled_from(["none", "type", "bad_number", "unknown_key", "missing", "length_and_cylinders",
                                 "neither", "end", "current", "soma", "synapse", "frequencies"]))
    if kind == "type":
        container, key, _ = draw(st.sampled_from(_numbers(sc)))
        bad = draw(BAD_TYPES)
        container[key] = bad
    elif kind == "bad_number":
        container, key, rule = draw(st.sampled_from([n for n in _numbers(sc) if n[2] != "any"]))
        bad = [-1.0, -1e-9, -5] if rule == "nonneg" else [0, 0.0, -2.5]
        container[key] = draw(st.sampled_from(bad))
    elif kind == "unknown_key":
        _, obj = draw(st.sampled_from(_objects(sc)))
        obj[draw(st.sampled_from(["bogus", "lenght", "Rn", "diam", "tau_rize"]))] = 1.0
    elif kind == "missing":
        where, obj = draw(st.sampled_from(_objects(sc)))
        required = {"": ["membrane", "branches", "synapse"], "membrane": ["Rm", "Ri"], "soma": ["diameter"],
                    "current": [k for k in obj if k != "shape"] + ["shape"], "cylinder": ["length", "diameter"],
                    "end": ["G"], "synapse": [k for k in obj if k != "current"],
                    "branch": ["id", "parent"] + (["cylinders"] if "cylinders" in obj
                                                  else ["length", "diameter"])}[where]
        del obj[draw(st.sampled_from(required))]
    elif kind == "length_and_cylinders":
        b = draw(st.sampled_from(sc["branches"]))
        if "cylinders" in b:
            b["length"] = 1.0
            if draw(st.booleans()):
                b["diameter"] = 1.0
        else:
            b["cylinders"] = [{"length": b["length"], "diameter": b["diameter"]}]
    elif kind == "neither":
        b = draw(st.sampled_from(sc["branches"]))
        for k in ("cylinders", "length", "diameter"):
            b.pop(k, None)
    elif kind == "end":
        terminals = [b for b in sc["branches"] if "end" in b] or [sc["branches"][-1]]
        b = draw(st.sampled_from(terminals))
        b["end"] = draw(st.sampled_from(["open", "Sealed", "", 3, None, [], {"C": 1.0}, {"G": 1.0, "R": 2.0},
                                         {"G": "1"}, {}]))
    elif kind == "current":
        sc["synapse"]["current"] = draw(st.sampled_from([
            {"shape": "beta", "tau": 1, "peak": 1}, {"shape": "alpha", "peak": 1},
            {"shape": "alpha", "tau": 0, "peak": 1}, {"shape": "dual_exponential", "tau_rise": 1, "peak": 1},
            {"tau": 1, "peak": 1}, "alpha", 5, {"shape": "alpha", "tau": 1, "peak": 1, "tau_rise": 1},
            {"shape": "dual_exponential", "tau": 1, "peak": 1}]))
    elif kind == "soma":
        sc["soma"] = draw(st.sampled_from([{}, {"Rm": 1000.0}, "big", [], 3.0, {"diameter": 10, "x": 1},
                                           {"diameter": -1}, {"diameter": "10"}, True]))
    elif kind == "synapse":
        syn = sc["synapse"]
        sc["synapse"] = draw(st.sampled_from([
            {**syn, "path": "b0"} if "branch" in syn else {**syn, "branch": "b0"},
            {}, "b0", None, {"branch": "b0"}, {"path": "b0", "distance": 1.0}, {"branch": "", "distance": 0.0}]))
    elif kind == "frequencies":
        sc["frequencies_hz"] = draw(st.sampled_from([[], [2e6], [-1.0], "10", [10, "x"], [None], 10]))
    return sc


def _engine_accepts(sc):
    try:
        somaward.validate(copy.deepcopy(sc))
        return True
    except ScenarioError as err:
        assert "\n" not in str(err)
        return False


@SETTINGS
@given(valid_scenarios())
def test_valid_scenarios_accepted_by_both(sc):
    """Generated valid scenarios pass jsonschema and the engine; filled-in defaults still pass
    jsonschema (the engine's output is within the published contract)."""
    assert VALIDATOR.is_valid(sc), next(VALIDATOR.iter_errors(sc)).message
    v = somaward.validate(copy.deepcopy(sc))
    assert VALIDATOR.is_valid(v), next(VALIDATOR.iter_errors(v)).message


@SETTINGS
@given(mutated())
def test_schema_and_engine_agree(sc):
    """jsonschema and somaward.validate accept and reject the same scenarios."""
    by_schema = VALIDATOR.is_valid(sc)
    by_engine = _engine_accepts(sc)
    detail = "" if by_schema else next(VALIDATOR.iter_errors(sc)).message
    assert by_schema == by_engine, (by_schema, by_engine, detail, sc)


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf])
def test_non_finite_numbers_rejected_by_engine(value):
    """Non-finite numbers are outside JSON; the engine rejects them (no schema comparison)."""
    sc = {"membrane": {"Rm": 20000, "Ri": value},
          "branches": [{"id": "a", "parent": None, "length": 10, "diameter": 1}],
          "synapse": {"branch": "a", "distance": 1}}
    with pytest.raises(ScenarioError, match=r"^membrane\.Ri: must be a finite number"):
        somaward.validate(sc)
