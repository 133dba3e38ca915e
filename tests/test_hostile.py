"""Hostile and absurd input on the engine (issue 9): plausible bounds, numbers a float cannot
hold, deep nesting, one-line messages that name a field, and the last guard against NaN/inf.

Sources: these are contract tests of DEVELOPERS.md ("one clear line naming the JSON path and
what is allowed — never a traceback, never NaN or inf in a report"): common practice, no
source. The one physics check, at the bound corners, is that every voltage ratio lies in [0, 1]
for current injected at one point of a passive tree (derived: the maximum principle of a
network of positive conductances at 0 Hz; for |A(iω)| ≤ 1 at every frequency the same bound
that tests/test_properties.py checks). Every scenario below is invented.
"""

import copy
import itertools
import json
import math

import pytest

import somaward
from input_paths import numeric_fields, one_line, path_in_message, resolves
from somaward import ScenarioError
from somaward.errors import InternalError
from somaward.export import fingerprint
from somaward.report import non_finite
from somaward.schema_check import MAX_DEPTH, describe, quote_key

BASE = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
        "branches": [{"id": "trunk", "parent": None, "length": 400, "diameter": 3.0},
                     {"id": "tuft", "parent": "trunk", "length": 300, "diameter": 1.0, "end": {"G": 1.0, "C": 2.0}},
                     {"id": "taper", "parent": "trunk",
                      "cylinders": [{"length": 50, "diameter": 2}, {"length": 50, "diameter": 1}]}],
        "synapse": {"branch": "tuft", "distance": 250, "current": {"shape": "alpha", "tau": 0.5, "peak": 50}},
        "frequencies_hz": [0, 100], "map_spacing_um": 100, "map_frequency_hz": 0,
        "equivalent_cylinder": {"tolerance": 0.05}}
PATH_FORM = {"path": "tuft", "path_distance": 650}
DUAL = {"shape": "dual_exponential", "tau_rise": 0.5, "tau_decay": 3.0, "peak": 50}

# canonical schema path -> (where in BASE, variant of BASE it needs)
FIELDS = {
    "membrane.Rm": (["membrane", "Rm"], None),
    "membrane.Ri": (["membrane", "Ri"], None),
    "membrane.Cm": (["membrane", "Cm"], None),
    "soma.diameter": (["soma", "diameter"], None),
    "soma.Rm": (["soma", "Rm"], None),
    "branches[].length": (["branches", 0, "length"], None),
    "branches[].diameter": (["branches", 0, "diameter"], None),
    "branches[].cylinders[].length": (["branches", 2, "cylinders", 1, "length"], None),
    "branches[].cylinders[].diameter": (["branches", 2, "cylinders", 1, "diameter"], None),
    "branches[].end.G": (["branches", 1, "end", "G"], None),
    "branches[].end.C": (["branches", 1, "end", "C"], None),
    "synapse.distance": (["synapse", "distance"], None),
    "synapse.path_distance": (["synapse", "path_distance"], "path"),
    "synapse.current.tau": (["synapse", "current", "tau"], None),
    "synapse.current.peak": (["synapse", "current", "peak"], None),
    "synapse.current.tau_rise": (["synapse", "current", "tau_rise"], "dual"),
    "synapse.current.tau_decay": (["synapse", "current", "tau_decay"], "dual"),
    "frequencies_hz[]": (["frequencies_hz", 1], None),
    "map_spacing_um": (["map_spacing_um"], None),
    "map_frequency_hz": (["map_frequency_hz"], None),
    "equivalent_cylinder.tolerance": (["equivalent_cylinder", "tolerance"], None),
}
# A value inside the bounds that other rules still refuse: (field, "lo"/"hi").
SEMANTIC = {("synapse.distance", "hi"), ("synapse.path_distance", "hi"), ("synapse.current.tau_rise", "hi"),
            ("synapse.current.tau_decay", "lo")}


NODES = numeric_fields()


def _scenario(field, value):
    where, variant = FIELDS[field]
    sc = copy.deepcopy(BASE)
    if variant == "path":
        sc["synapse"] = {**PATH_FORM, "current": sc["synapse"]["current"]}
    elif variant == "dual":
        sc["synapse"]["current"] = dict(DUAL)
    node = sc
    for key in where[:-1]:
        node = node[key]
    node[where[-1]] = value
    return sc


def _concrete(field):
    where = FIELDS[field][0]
    path = ""
    for key in where:
        path = f"{path}[{key}]" if isinstance(key, int) else (f"{path}.{key}" if path else key)
    return path


def _lower(node):
    return node.get("minimum", node.get("exclusiveMinimum"))


def test_every_number_has_plausible_bounds_and_a_unit():
    """Each numeric field states a lower and an upper bound and its unit (x-unit; "" when the
    number has none), and this file covers each one (a new field must be added above)."""
    assert set(NODES) == set(FIELDS)
    for path, node in NODES.items():
        assert "maximum" in node and _lower(node) is not None, path
        assert "x-unit" in node, path
        assert _lower(node) < node["maximum"], path


def _assert_one_line_error(err, sc, path=None):
    msg = str(err)
    assert one_line(msg), msg
    keys, _ = path_in_message(msg)
    assert resolves(sc, keys), msg
    if path is not None:
        assert msg.startswith(path + ": "), msg
    assert one_line(err.plain), err.plain


@pytest.mark.parametrize("field", sorted(FIELDS))
def test_bounds_accepted_inside(field):
    """The bounds themselves are allowed (inclusive minimum and maximum); a sign rule > 0 is not
    a bound that can be met, so such fields are tried at their plausible minimum."""
    node = NODES[field]
    for side, value in (("lo", node.get("minimum")), ("hi", node["maximum"])):
        if value is None or (field, side) in SEMANTIC or field == "map_spacing_um" and side == "lo":
            continue
        somaward.validate(_scenario(field, value))


@pytest.mark.parametrize("field", sorted(FIELDS))
def test_bounds_rejected_outside_with_range_unit_and_value(field):
    """Beyond the maximum: one line with the path, the bound, the range, the unit and the value
    given; below a plausible minimum likewise; a broken sign rule keeps its short form."""
    node = NODES[field]
    unit = node["x-unit"]
    u = f" {unit}" if unit else ""
    hi, lo = node["maximum"], node.get("minimum")
    path = _concrete(field)
    cases = [(hi * 1.5 if hi > 0 else hi + 1, "≤")]
    if lo is not None and lo > 0:
        cases.append((lo / 2, "≥"))
    elif lo is not None:
        cases.append((lo - 1 if lo < 0 else -1, "≥"))
    if "exclusiveMinimum" in node:
        cases.append((node["exclusiveMinimum"], ">"))
    for value, sign in cases:
        sc = _scenario(field, value)
        with pytest.raises(ScenarioError) as info:
            somaward.validate(sc)
        _assert_one_line_error(info.value, sc, path)
        msg = str(info.value)
        assert f"must be {sign} " in msg and msg.endswith(f", got {describe(value)}"), msg
        assert u.strip() in msg
        if sign != ">" and not (sign == "≥" and lo == 0):
            assert "(allowed: " in msg and u in msg.split("(allowed: ")[1], msg
            assert "enter a number" in info.value.plain and "\n" not in info.value.plain


@pytest.mark.parametrize("value, words", [
    (10 ** 309, "an integer of 310 digits"),          # 1 followed by 309 zeros
    (-(10 ** 309), "a negative integer of 310 digits"),
    (10 ** 4300, "an integer of 4301 digits"),
    (10 ** 10000 + 7, "an integer of 10001 digits"),
], ids=["1e309", "-1e309", "1e4300", "1e10000"])
@pytest.mark.parametrize("field", sorted(FIELDS))
def test_integers_a_float_cannot_hold(field, value, words):
    """A JSON integer beyond the largest double is out of range (never an OverflowError, never a
    ValueError from turning it into text), one line, with its size in words."""
    sc = _scenario(field, value)
    with pytest.raises(ScenarioError) as info:
        somaward.solve(sc)
    _assert_one_line_error(info.value, sc, _concrete(field))
    assert str(info.value).endswith(f"got {words}"), str(info.value)


@pytest.mark.parametrize("value", [5e-324, 2.2250738585072014e-308, 1e-300, 1.7976931348623157e308, -5e-324,
                                   -1.7976931348623157e308, 0, -0.0, 10 ** 308])
@pytest.mark.parametrize("field", sorted(FIELDS))
def test_extreme_doubles_give_a_report_or_one_line(field, value):
    """Subnormal, smallest normal and largest doubles in every field: a finite report or one
    line naming the field — nothing else (no ZeroDivisionError, OverflowError, NaN)."""
    sc = _scenario(field, value)
    try:
        report = somaward.solve(sc)
    except ScenarioError as err:
        _assert_one_line_error(err, sc)
        return
    json.dumps(report, allow_nan=False)


def test_map_spacing_subnormal_is_too_fine_not_overflow():
    """map_spacing_um = 5e-324 µm used to raise OverflowError (ceil of inf); it is too fine."""
    sc = _scenario("map_spacing_um", 5e-324)
    with pytest.raises(ScenarioError, match=r"^map_spacing_um: too fine for this tree"):
        somaward.solve(sc)


@pytest.mark.parametrize("edit", [
    lambda s: s["soma"].__setitem__("diameter", 1e160), lambda s: s["soma"].__setitem__("diameter", 1e-160),
    lambda s: s["branches"][0].__setitem__("diameter", 1e250),
    lambda s: s["branches"][0].__setitem__("diameter", 1e-200),
    lambda s: s["membrane"].__setitem__("Rm", 1e308), lambda s: s["branches"][1]["end"].__setitem__("G", 1e308),
], ids=["soma_1e160", "soma_1e-160", "diameter_1e250", "diameter_1e-200", "Rm_1e308", "G_1e308"])
def test_issue_examples_are_one_line(edit):
    """The examples of issue 9 class 4 (OverflowError, ZeroDivisionError, 351 NaN, inf)."""
    sc = copy.deepcopy(BASE)
    edit(sc)
    with pytest.raises(ScenarioError) as info:
        somaward.solve(sc)
    _assert_one_line_error(info.value, sc)
    assert "(allowed: " in str(info.value)


# ------------------------------------------------------------------ bound corners
RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2 = (1, 1e9), (1, 1e5), (0.01, 100)
GEOMETRY = [(d, ell) for d in (1e-3, 1e3) for ell in (1e-3, 1e6)]
SOMAS = [None, {"diameter": 0.1, "Rm": 1}, {"diameter": 0.1, "Rm": 1e9}, {"diameter": 1e4, "Rm": 1},
         {"diameter": 1e4, "Rm": 1e9}]
ENDS = ["sealed", "killed", "infinite", {"G": 1e6, "C": 1e6}, {"G": 0, "C": 1e6}, {"G": 1e6, "C": 0}]
FAST = {"frequencies_hz": [0, 1e-300, 1, 1e6], "map_spacing_um": 1e10}


def _check_report(report):
    """No NaN/inf (contract) and the steady-state ratios within [0, 1] (derived: maximum
    principle of a passive network)."""
    json.dumps(report, allow_nan=False)
    ss = report["attenuation"]["steady_state"]
    for key in ("site_to_soma", "soma_to_site"):
        assert 0.0 <= ss[key] <= 1.0 + 1e-12
    for key in ("site_to_soma", "soma_to_site"):
        assert all(0.0 <= m <= 1.0 + 1e-9 for m in report["frequency_response"][key]["magnitude"])


def test_uniform_cable_at_every_bound_corner():
    """Every combination of Rm, Ri, Cm, diameter and length at their bounds, a soma absent or at
    its corners, every kind of end (loads at their bounds), the highest frequency and a
    subnormal one: a finite report. 960 scenarios; the synapse and map frequency vary with the
    case number so each corner sees the proximal end, the middle and the far end."""
    n = 0
    membranes = itertools.product(RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2)
    for (rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2), (d, ell), soma, end in itertools.product(membranes, GEOMETRY, SOMAS, ENDS):
        frac = (0.0, 0.5, 1.0)[n % 3] if end != "killed" else (0.0, 0.5)[n % 2]
        sc = {"membrane": {"Rm": rm_ohm_cm2, "Ri": ri_ohm_cm, "Cm": cm_uF_cm2}, "soma": soma,
              "branches": [{"id": "c", "parent": None, "length": ell, "diameter": d, "end": end}],
              "synapse": {"branch": "c", "distance": frac * ell}, "map_frequency_hz": (0, 1e6)[n % 2], **FAST}
        _check_report(somaward.solve(sc))
        n += 1
    assert n == 8 * 4 * 5 * 6


def test_tapers_and_branch_points_at_bound_corners():
    """Diameter steps from the smallest to the largest diameter (and back) inside a branch and at
    a branch point, lengths at their bounds, both synapse forms: a finite report."""
    corners = list(itertools.product((1e-3, 1e3), (1e-3, 1e6)))
    n = 0
    membranes = itertools.product(RM_OHM_CM2, RI_OHM_CM, CM_UF_CM2)
    for (rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2), (a, b) in itertools.product(membranes, itertools.product(corners, corners)):
        end = ENDS[n % len(ENDS)]
        branches = [{"id": "t", "parent": None, "cylinders": [{"diameter": a[0], "length": a[1]},
                                                                {"diameter": b[0], "length": b[1]}]},
                    {"id": "x", "parent": "t", "diameter": b[0], "length": a[1], "end": end},
                    {"id": "y", "parent": "t", "diameter": a[0], "length": b[1]}]
        syn = ({"branch": "t", "distance": a[1] + b[1] / 2} if n % 2 else
               {"path": "y", "path_distance": a[1] + b[1] + b[1] * 0.999})
        sc = {"membrane": {"Rm": rm_ohm_cm2, "Ri": ri_ohm_cm, "Cm": cm_uF_cm2}, "soma": SOMAS[n % len(SOMAS)],
              "branches": branches, "synapse": syn, "map_frequency_hz": 1e6, **FAST}
        _check_report(somaward.solve(sc))
        n += 1
    assert n == 8 * 16


# ------------------------------------------------------------------ deep nesting
def _nested(depth, leaf=1):
    value = leaf
    for _ in range(depth):
        value = [value]
    return value


@pytest.mark.parametrize("depth", [MAX_DEPTH, 2_000, 100_000])
@pytest.mark.parametrize("where", [["notes"], ["membrane", "Rm"], ["branches", 1, "end"], ["title", "x"]])
def test_deep_nesting_is_one_line(where, depth):
    """A list nested 2,000 deep in notes raised RecursionError in solve; now any nesting beyond
    the limit is one line naming the field it sits in (its first keys), from solve and validate."""
    sc = copy.deepcopy(BASE)
    if where[0] == "title":
        sc["title"] = {"x": _nested(depth)}
    else:
        node = sc
        for key in where[:-1]:
            node = node[key]
        node[where[-1]] = _nested(depth)
    for entry in (somaward.solve, somaward.validate):
        with pytest.raises(ScenarioError) as info:
            entry(sc)
        _assert_one_line_error(info.value, sc)
        assert str(info.value).startswith(_first_keys(where))
        if depth > MAX_DEPTH:
            assert "nested more than" in str(info.value)


def _first_keys(where):
    path = ""
    for key in where:
        path = f"{path}[{key}]" if isinstance(key, int) else (f"{path}.{key}" if path else key)
    return path


def test_deep_scenario_itself():
    """The whole input a deep list: one line, path 'scenario'."""
    with pytest.raises(ScenarioError, match=r"^scenario(\[0\])*: nested more than"):
        somaward.solve(_nested(5_000))


# ------------------------------------------------------------------ one line, naming a field
ODD = ["", "a\nb", "a\r\nb", "x\u2028y", "x\u2029y", "x\x85y", "\x00", "tab\there", 'quote"s', "back\\slash",
       "a.b", "[0]", "é", "键", "\U0001F600", "\u202Eevil", " ", "x" * 500, "\ud800"]


@pytest.mark.parametrize("key", ODD, ids=[f"k{i}" for i in range(len(ODD))])
@pytest.mark.parametrize("where", [[], ["membrane"], ["branches", 2, "cylinders", 0], ["synapse", "current"],
                                   ["branches", 1, "end"], ["soma"]])
def test_unknown_odd_keys_are_one_line_and_named(where, key):
    """An unknown key with a newline, an empty key, a key with quotes, dots or brackets: the
    message is one line and starts with the path of that key (the parent path plus the quoted
    key), which leads back to it."""
    sc = copy.deepcopy(BASE)
    node = sc
    for k in where:
        node = node[k]
    node[key] = 1
    with pytest.raises(ScenarioError) as info:
        somaward.solve(sc)
    _assert_one_line_error(info.value, sc)
    keys, rest = path_in_message(str(info.value))
    assert keys[-1] == key or keys[-1].endswith("…") and key.startswith(keys[-1][:-1]), str(info.value)
    assert "unknown" in rest or "must" in rest or "give either" in rest


def test_empty_key_names_a_field():
    """{"": 1} at the top and inside membrane (issue 9 class 5)."""
    for where, path in (([], 'scenario[""]'), (["membrane"], 'membrane[""]')):
        sc = copy.deepcopy(BASE)
        node = sc
        for k in where:
            node = node[k]
        node[""] = 1
        with pytest.raises(ScenarioError) as info:
            somaward.solve(sc)
        assert str(info.value).startswith(path + ": unknown key"), str(info.value)


@pytest.mark.parametrize("bad", ["a\nb", "x\u2028y", "\x85", "z" * 200, "a → b", "it's"])
def test_branch_ids_in_messages_are_one_line(bad):
    """Cycle, duplicate id, unknown parent, unknown synapse branch, end on an inner branch and a
    killed end under the synapse, each with an id holding a line break or other odd text."""
    edits = []
    cyc = copy.deepcopy(BASE)
    cyc["branches"][0]["id"] = bad
    cyc["branches"][1]["parent"] = bad
    cyc["branches"][2]["parent"] = bad
    cyc["branches"][0]["parent"] = "taper"
    edits.append(cyc)
    dup = copy.deepcopy(BASE)
    dup["branches"][1]["id"] = dup["branches"][2]["id"] = bad
    edits.append(dup)
    par = copy.deepcopy(BASE)
    par["branches"][1]["parent"] = bad
    edits.append(par)
    syn = copy.deepcopy(BASE)
    syn["synapse"]["branch"] = bad
    edits.append(syn)
    pth = copy.deepcopy(BASE)
    pth["synapse"] = {"path": bad, "path_distance": 3}
    edits.append(pth)
    inner = copy.deepcopy(BASE)
    inner["branches"][0]["id"] = bad
    inner["branches"][1]["parent"] = inner["branches"][2]["parent"] = bad
    inner["branches"][0]["end"] = "sealed"
    edits.append(inner)
    killed = copy.deepcopy(BASE)
    killed["branches"][1]["id"] = killed["synapse"]["branch"] = bad
    killed["branches"][1]["end"] = "killed"
    killed["synapse"]["distance"] = 300
    edits.append(killed)
    for sc in edits:
        with pytest.raises(ScenarioError) as info:
            somaward.solve(sc)
        _assert_one_line_error(info.value, sc)


@pytest.mark.parametrize("where", [["title"], ["notes"], ["branches", 0, "id"], ["branches", 1, "parent"],
                                   ["synapse", "branch"]])
def test_half_surrogates_in_text_are_refused(where):
    """A Python str may hold half of a surrogate pair; no UTF-8 file can, and the fingerprint
    (SHA-256 of the UTF-8 scenario) raised UnicodeEncodeError on it (found by the fuzz test's
    first run). One line naming the field."""
    sc = copy.deepcopy(BASE)
    node = sc
    for key in where[:-1]:
        node = node[key]
    node[where[-1]] = "tr\ud800unk"
    with pytest.raises(ScenarioError) as info:
        somaward.solve(sc)
    _assert_one_line_error(info.value, sc, _first_keys(where))
    assert "surrogate" in str(info.value)


def test_cycle_message_keeps_plain_ids_bare():
    """Plain ids read as before: (trunk → taper → trunk)."""
    sc = copy.deepcopy(BASE)
    sc["branches"][0]["parent"] = "taper"
    with pytest.raises(ScenarioError, match=r"\(trunk → taper → trunk\)"):
        somaward.validate(sc)


@pytest.mark.parametrize("key, quoted", [("membrane", "membrane"), ("", '""'), ("a\nb", '"a\\nb"'),
                                         ("x\u2028y", '"x\\u2028y"'), ("\U0001F600", '"\U0001F600"'),
                                         ("\u200b", '"\\u200b"'), ("é", '"é"'), ("x" * 101, '"' + "x" * 100 + '…"')])
def test_quote_key(key, quoted):
    """Keys in paths: plain names bare, everything else a one-line JSON string."""
    assert quote_key(key) == quoted


def test_describe_never_raises_and_is_one_line():
    """Values quoted in messages: huge integers by their size, deep lists by their type, text
    with its line breaks escaped."""
    assert describe(10 ** 5000) == "an integer of 5001 digits"
    assert describe(_nested(5000)) == "a list"
    for value in ("a\nb", "x\u2028y", ["a\nb"], {"k\n": 1}, float("nan"), 2.5, None, True, object()):
        assert one_line(describe(value)), describe(value)


# ------------------------------------------------------------------ the last guard
def test_guard_turns_a_nan_into_an_internal_error(monkeypatch):
    """A NaN reaching the report is a bug: solve raises InternalError (one line, the place and
    the scenario's fingerprint), never returns the number."""
    import somaward.report as rep

    real = rep.equivalent_cylinder

    def broken(*args, **kwargs):
        return {**real(*args, **kwargs), "probe": float("nan")}

    monkeypatch.setattr(rep, "equivalent_cylinder", broken)
    with pytest.raises(InternalError) as info:
        somaward.solve(copy.deepcopy(BASE))
    msg = str(info.value)
    assert one_line(msg)
    assert "a NaN at equivalent_cylinder.probe" in msg
    assert info.value.fingerprint == fingerprint(somaward.validate(copy.deepcopy(BASE)))
    assert f"fingerprint {info.value.fingerprint}" in msg
    assert isinstance(info.value, RuntimeError) and not isinstance(info.value, ScenarioError)


@pytest.mark.parametrize("report, where", [
    ({"a": 1.0, "b": [1.0] * 100 + [math.inf]}, "an infinity at b[100]"),
    ({"a": [{"x": "s", "y": -math.inf}]}, "an infinity at a[0].y"),
    ({"a\nb": {"": [None, math.nan]}}, 'a NaN at report["a\\nb"][""][1]'),
    ({"big": [1e308] * 40}, None),                     # the sum overflows; every item is finite
    ({"t": ["x"] * 50, "n": [None, 1, True, 2.0] * 20}, None),
    ([[[[[float("nan")]]]]], "a NaN at report[0][0][0][0][0]"),
])
def test_non_finite_finds_the_place(report, where):
    """The guard's search (derived: by construction of each input)."""
    assert non_finite(report) == where
