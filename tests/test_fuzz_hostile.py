"""Engine fuzz test (issue 9): ≥ 10⁴ generated scenarios per run, valid and hostile, through solve().

Every case is either a report that ``json.dumps(allow_nan=False)`` accepts, or a ScenarioError
whose message is one line starting with a JSON path that exists in the input (for a missing key,
the object that lacks it) — nothing else. Common practice, no source: the contract of
DEVELOPERS.md; every scenario is invented.

Cases: random valid trees of 1–6 branches (uniform branches and stepwise tapers via
``cylinders``, every end kind including lumped loads, with and without a soma, both synapse
forms, both current shapes; numbers drawn over the whole plausible range, bounds included), and
0–2 mutations each from these classes: wrong types, magnitudes from 5e-324 to 1e308 (and NaN,
inf), integers a float cannot hold, deep nesting, odd keys, odd branch ids and references,
unicode and line breaks in text, missing keys, and broken structure (cycles, duplicate ids,
mixed synapse forms). To keep each case cheap the costly parts are switched off through
scenario fields — a few frequencies, a coarse map — never by cutting cases.

``SOMAWARD_FUZZ_EXAMPLES`` sets the count (default 10 000; lower it while iterating). The run
prints its count, how the cases ended and its duration; a case that runs past a guard of 60 s is
reported as a hang (a hang detector, not a timing assertion).
"""

import collections
import functools
import json
import math
import os
import signal
import time

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import somaward
from input_paths import numeric_fields, one_line, path_in_message, resolves
from somaward import ScenarioError

EXAMPLES = int(os.environ.get("SOMAWARD_FUZZ_EXAMPLES", "10000"))
HANG_S = 60
FIELDS = numeric_fields()
TALLY = collections.Counter()


# ------------------------------------------------------------------ valid scenarios
def _bounds(field):
    node = FIELDS[field]
    return node.get("minimum", node.get("exclusiveMinimum")), node["maximum"]


@functools.lru_cache(maxsize=None)
def _number(field):
    """A value over the field's whole range: its bounds, and log-uniform draws between them
    (built once per field: building strategies per draw would cost more than the solve)."""
    node = FIELDS[field]
    lo, hi = _bounds(field)
    pos_lo = lo if lo > 0 else 1e-6 * hi
    log = st.floats(math.log10(pos_lo), math.log10(hi)).map(lambda e: min(max(10.0 ** e, pos_lo), hi))
    picks = [st.just(hi), log, log]
    if lo > 0 or "exclusiveMinimum" not in node:
        picks.append(st.just(lo))
    return st.one_of(picks)


FREQUENCIES = st.lists(st.sampled_from([0.0, 1e6, 5e-324]) | _number("frequencies_hz[]"), min_size=1, max_size=3)
MAP_FREQUENCY = st.sampled_from([0.0, 1e6]) | _number("map_frequency_hz")
PEAK = st.floats(-1e6, 1e6)
ENDS = st.one_of(st.sampled_from(["sealed", "killed", "infinite", None]),
                 st.fixed_dictionaries({"G": _number("branches[].end.G")},
                                       optional={"C": _number("branches[].end.C")}))


@st.composite
def currents(draw):
    if draw(st.booleans()):
        return {"shape": "alpha", "tau": draw(_number("synapse.current.tau")),
                "peak": draw(PEAK)}
    rise = min(draw(_number("synapse.current.tau_rise")), 5000.0)
    decay = draw(_number("synapse.current.tau_decay"))
    return {"shape": "dual_exponential", "tau_rise": rise, "tau_decay": decay if decay > rise else 2 * rise,
            "peak": draw(PEAK)}


def _length(branch):
    return math.fsum(c["length"] for c in branch.get("cylinders", [branch]))


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
            b.update(length=draw(_number("branches[].length")), diameter=draw(_number("branches[].diameter")))
        else:
            b["cylinders"] = [{"length": draw(_number("branches[].cylinders[].length")),
                               "diameter": draw(_number("branches[].cylinders[].diameter"))}
                              for _ in range(draw(st.integers(1, 3)))]
        branches.append(b)
    for i, b in enumerate(branches):
        if not children[i]:
            end = draw(ENDS)
            if end is not None:
                b["end"] = end
    j = draw(st.integers(0, n - 1))
    frac = draw(st.sampled_from([0.0, 0.5, 1.0]) | st.floats(0.0, 1.0))
    if branches[j].get("end") == "killed":
        frac = min(frac, 0.9)
    if children[j] or draw(st.booleans()):
        syn = {"branch": f"b{j}", "distance": frac * _length(branches[j])}
    else:
        before, i = 0.0, branches[j]["parent"]
        while i is not None:
            k = int(i[1:])
            before += _length(branches[k])
            i = branches[k]["parent"]
        syn = {"path": f"b{j}", "path_distance": before + frac * _length(branches[j])}
    if draw(st.booleans()):
        syn["current"] = draw(currents())
    membrane = {"Rm": draw(_number("membrane.Rm")), "Ri": draw(_number("membrane.Ri"))}
    if draw(st.booleans()):
        membrane["Cm"] = draw(_number("membrane.Cm"))
    sc = {"membrane": membrane, "branches": branches, "synapse": syn}
    soma = draw(st.sampled_from(["absent", "null", "d", "d+Rm"]))
    if soma != "absent":
        sc["soma"] = None if soma == "null" else {"diameter": draw(_number("soma.diameter"))}
        if soma == "d+Rm":
            sc["soma"]["Rm"] = draw(_number("soma.Rm"))
    # the costly parts, switched off through the scenario: few frequencies, a coarse map
    sc["frequencies_hz"] = draw(FREQUENCIES)
    total = math.fsum(_length(b) for b in branches)
    sc["map_spacing_um"] = draw(st.sampled_from([1e10, max(total / 20, 1e-3)]))
    sc["map_frequency_hz"] = draw(MAP_FREQUENCY)
    if draw(st.booleans()):
        sc["title"] = draw(st.text(max_size=10))
    return sc


# ------------------------------------------------------------------ mutations (applied in the test)
MAGNITUDES = [5e-324, -5e-324, 2.2250738585072014e-308, 1e-300, 1e-30, 1e300, 1e308, -1e308,
              1.7976931348623157e308, 0.0, -0.0, math.nan, math.inf, -math.inf]
WRONG = ["12", "", True, False, None, [], [1.0], {}, {"G": 1}, "sealed"]
TEXT = st.text(st.characters(codec=None, exclude_categories=()), max_size=12) | st.sampled_from(
    ["", "\n", "a\nb", "x\u2028y", "\x85", "\r\n", "\x00", '"', "\\", "[0]", "a.b", " ", "\u202e", "\ud800",
     "b0", "b1", "x" * 300])
MUTATION = st.tuples(
    st.sampled_from(["type", "magnitude", "bigint", "deep", "odd_key", "odd_id", "text", "missing", "structure"]),
    st.integers(0, 10 ** 6), st.integers(0, 10 ** 6), TEXT)


def _places(sc):
    """(container, key) of every value in the scenario (it nests at most 5 levels)."""
    out, stack = [], [sc]
    while stack:
        node = stack.pop()
        for key, value in (node.items() if isinstance(node, dict) else enumerate(node)):
            out.append((node, key))
            if isinstance(value, (dict, list)):
                stack.append(value)
    return out


def _nested(depth, leaf):
    for _ in range(depth):
        leaf = [leaf] if depth % 2 else {"k": leaf}
    return leaf


def mutate(sc, kind, a, b, text):
    places = _places(sc)
    numbers = [p for p in places if isinstance(p[0][p[1]], (int, float)) and not isinstance(p[0][p[1]], bool)]
    objects = [sc] + [p[0][p[1]] for p in places if isinstance(p[0][p[1]], dict)]
    if kind == "type":
        node, key = places[a % len(places)]
        node[key] = WRONG[b % len(WRONG)]
    elif kind == "magnitude" and numbers:
        node, key = numbers[a % len(numbers)]
        node[key] = MAGNITUDES[b % len(MAGNITUDES)] if b % 3 else (-1) ** b * 10.0 ** ((b % 632) - 324)
    elif kind == "bigint" and numbers:
        node, key = numbers[a % len(numbers)]
        node[key] = (-1) ** b * (10 ** (300 + b % 5000) + b)
    elif kind == "deep":
        depth = [31, 33, 100, 2_000, 20_000][b % 5]
        target = [(sc, "notes"), (sc, "title"), (sc, text or "x")] + places
        node, key = target[a % len(target)]
        node[key] = _nested(depth, 1.0)
    elif kind == "odd_key":
        objects[a % len(objects)][text] = WRONG[b % len(WRONG)]
    elif kind == "odd_id":
        branches = sc["branches"] if isinstance(sc.get("branches"), list) else []
        dicts = [x for x in branches if isinstance(x, dict)]
        if dicts:
            br = dicts[a % len(dicts)]
            old = br.get("id")
            br["id"] = text
            for other in dicts:                       # move the references too, or some of them
                if other.get("parent") == old and (b % 3):
                    other["parent"] = text
            syn = sc.get("synapse")
            if isinstance(syn, dict) and b % 2:
                for k in ("branch", "path"):
                    if syn.get(k) == old:
                        syn[k] = text
    elif kind == "text":
        sc[["title", "notes"][b % 2]] = text * (1 + b % 3)
    elif kind == "missing" and places:
        node, key = places[a % len(places)]
        if isinstance(node, dict):
            del node[key]
        else:
            node.pop(key)
    elif kind == "structure":
        branches = sc.get("branches")
        choice = b % 6
        if choice == 0:
            sc["branches"] = [] if b % 2 else {"b0": 1}
        elif choice == 1 and isinstance(branches, list) and len(branches) > 1 and isinstance(branches[0], dict):
            branches[0]["parent"] = branches[-1].get("id")          # a cycle (or a self-parent)
        elif choice == 2 and isinstance(branches, list) and len(branches) > 1 and isinstance(branches[1], dict):
            branches[1]["id"] = "b0"                                # a duplicate id
        elif choice == 3 and isinstance(sc.get("synapse"), dict):
            sc["synapse"].update({"branch": "b0", "path": "b0", "distance": 1.0})
        elif choice == 4 and isinstance(branches, list) and branches and isinstance(branches[0], dict):
            branches[0]["end"] = "killed"                           # an end on an inner branch, or under the synapse
            sc["synapse"] = {"branch": "b0", "distance": 1e9}
        else:
            sc["synapse"] = text


# ------------------------------------------------------------------ the test
class Hang(Exception):
    pass


def _alarm(_signum, _frame):
    raise Hang(f"a case ran past the {HANG_S} s hang guard")


def _check(sc):
    try:
        report = somaward.solve(sc)
    except ScenarioError as err:
        msg = str(err)
        assert one_line(msg), msg
        keys, _ = path_in_message(msg)
        assert resolves(sc, keys), f"the path does not exist in the input: {msg}"
        TALLY["one-line error"] += 1
        TALLY["error: " + _first_words(msg)] += 1
        return
    json.dumps(report, allow_nan=False)
    TALLY["report"] += 1


def _first_words(msg):
    rest = msg.split(": ", 1)[1]
    for stop in (",", ";", "(", " got", "'", '"'):
        rest = rest.split(stop)[0]
    return " ".join(rest.split()[:6])


@settings(max_examples=EXAMPLES, deadline=None, derandomize=True, database=None, print_blob=True,
          suppress_health_check=list(HealthCheck))
@given(valid_scenarios(), st.lists(MUTATION, max_size=2))
def _fuzz(sc, mutations):
    TALLY["cases"] += 1
    TALLY["valid" if not mutations else "mutated"] += 1
    for kind, a, b, text in mutations:
        TALLY["mutation: " + kind] += 1
        mutate(sc, kind, a, b, text)
    old = signal.signal(signal.SIGALRM, _alarm) if hasattr(signal, "SIGALRM") else None
    if old is not None:
        signal.alarm(HANG_S)
    try:
        _check(sc)
    finally:
        if old is not None:
            signal.alarm(0)
            signal.signal(signal.SIGALRM, old)


@pytest.mark.slow
def test_fuzz_solve_reports_or_one_line_errors():
    """≥ 10⁴ generated scenarios: a finite report or one line naming an existing path."""
    TALLY.clear()
    start = time.perf_counter()
    _fuzz()
    elapsed = time.perf_counter() - start
    print(f"\nfuzz: {TALLY['cases']} cases in {elapsed:.1f} s ({TALLY['valid']} valid trees, "
          f"{TALLY['mutated']} mutated): {TALLY['report']} reports, {TALLY['one-line error']} one-line errors")
    for key, count in sorted(TALLY.items()):
        if key.startswith(("mutation: ", "error: ")):
            print(f"  {count:6d}  {key}")
    assert TALLY["cases"] >= EXAMPLES
    assert TALLY["report"] > 0 and TALLY["one-line error"] > 0
