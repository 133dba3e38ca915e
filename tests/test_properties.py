"""Property tests (hypothesis) on random invented trees — issue 2 step 6.

Each property is an identity of linear passive cable theory (derived, see each docstring) or a
contract of the report (DEVELOPERS.md). Trees: 1–15 branches, 1–3 sections each (random
stepwise tapers), random terminal ends (sealed, killed, infinite, lumped G + C), with and without
a soma; all values invented.
"""

import copy
import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import somaward
from somaward.sites import transfer_log
from somaward.tree import build_tree, solve_tree

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
FREQS = [0.0, 3.0, 200.0, 5000.0]
UPPER = 1.0 + 1e-12


def _f(lo, hi):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False)


ENDS = st.one_of(st.sampled_from(["sealed", "killed", "infinite", None]),
                 st.builds(lambda g, c: {"G": g, "C": c}, _f(0.0, 20.0), _f(0.0, 50.0)),
                 st.builds(lambda g: {"G": g}, _f(0.0, 20.0)))


@st.composite
def scenarios(draw, max_branches=15, max_l=None, soma=None):
    """A semantically valid scenario. ``max_l``: per-section electrotonic length bound (then
    lengths are drawn in λ units, to reach L up to 50)."""
    rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2 = draw(_f(5000, 100000)), draw(_f(70, 300)), draw(_f(0.5, 1.5))
    n = draw(st.integers(1, max_branches))
    branches, children = [], [[] for _ in range(n)]
    for i in range(n):
        parent = None if i == 0 else draw(st.one_of(st.none(), st.integers(0, i - 1)))
        if parent is not None:
            children[parent].append(i)
        secs = []
        for _ in range(draw(st.integers(1, 3))):
            d = draw(_f(0.2, 6.0))
            if max_l is None:
                length = draw(_f(2.0, 400.0))
            else:
                lam = math.sqrt(rm_ohm_cm2 * d * 1e-4 / (4 * ri_ohm_cm)) * 1e4
                length = draw(_f(0.01, max_l)) * lam
            secs.append({"length": length, "diameter": d})
        b = {"id": f"b{i}", "parent": None if parent is None else f"b{parent}"}
        if len(secs) == 1 and draw(st.booleans()):
            b.update(secs[0])
        else:
            b["cylinders"] = secs
        branches.append(b)
    for i, b in enumerate(branches):
        if not children[i]:
            end = draw(ENDS)
            if end is not None:
                b["end"] = end
    has_soma = draw(st.booleans()) if soma is None else soma
    soma_val = None
    if has_soma:
        soma_val = {"diameter": draw(_f(4.0, 40.0))}
        if draw(st.booleans()):
            soma_val["Rm"] = draw(_f(1000.0, 100000.0))
    j = draw(st.integers(0, n - 1))
    frac = draw(_f(0.0, 0.97 if branches[j].get("end") == "killed" else 1.0))
    total = sum(s["length"] for s in branches[j].get("cylinders", [branches[j]]))
    sc = {"membrane": {"Rm": rm_ohm_cm2, "Ri": ri_ohm_cm, "Cm": cm_uF_cm2}, "branches": branches,
          "synapse": {"branch": f"b{j}", "distance": frac * total},
          "frequencies_hz": list(FREQS), "map_spacing_um": 1e6}
    if soma_val is not None or draw(st.booleans()):
        sc["soma"] = soma_val
    return sc


def _tree(sc):
    v = somaward.validate(sc)
    return build_tree(v["branches"], v["membrane"], v["soma"])


def _point(tree, sec, frac):
    """(section, y) not on a killed end; the recording site is (root section, 0)."""
    y = frac * float(tree.length_um[sec])
    if tree.end_code[sec] == 2:
        y = min(y, 0.97 * float(tree.length_um[sec]))
    return int(sec), y


@SETTINGS
@given(scenarios(), st.lists(st.tuples(st.integers(0, 10**6), _f(0, 1), st.integers(0, 10**6), _f(0, 1)),
                             min_size=1, max_size=4))
def test_reciprocity_two_injections(sc, pairs):
    """S6 — Z_ab = Z_ba (linear network theory; Koch 1999 ch. 3), from two injections (at a, then
    at b) with transfer_log, at DC and three frequencies; one point of each pair may be the soma."""
    tree = _tree(sc)
    sol = solve_tree(tree, 2j * math.pi * np.array(FREQS) * 1e-3)
    root = int(np.flatnonzero(tree.parent < 0)[0])
    for n, (ia, fa, ib, fb) in enumerate(pairs):
        a = (root, 0.0) if n == 0 else _point(tree, ia % tree.n_sections, fa)
        b = _point(tree, ib % tree.n_sections, fb)
        zab, zba = transfer_log(sol, a, b), transfer_log(sol, b, a)
        assert np.all(np.isfinite(zab.real)) and np.all(np.isfinite(zba.real))
        assert np.max(np.abs(np.expm1(zab - zba))) < 1e-9, (a, b)


def _all_ratios(report):
    st_ = report["attenuation"]["steady_state"]
    fr = report["frequency_response"]
    tm = report["tree_map"]
    pp = report["path_profile"]
    return ([st_["site_to_soma"], st_["soma_to_site"]] + fr["site_to_soma"]["magnitude"]
            + fr["soma_to_site"]["magnitude"] + tm["site_to_soma"] + tm["soma_to_site"]
            + pp["input_at_site"] + pp["input_at_soma"])


@SETTINGS
@given(scenarios())
def test_attenuation_between_zero_and_one(sc):
    """0 ≤ A ≤ 1 (+1e-12) both ways, at DC, every frequency, on the map and the path profile.

    Source: the convention A = V_out/V_in ≤ 1 of checks.md. At DC it is derived: with one
    current source in a passive tree V is positive and largest at the injection site (the
    maximum principle for λ²V'' = V with leak at every node). At s = iω it is the contract the
    report promises; no general proof is offered here, the property is tested as stated.
    Logs ≥ −1e-12 accordingly."""
    r = somaward.solve(sc)
    for a in _all_ratios(r):
        assert 0.0 <= a <= UPPER
    st_ = r["attenuation"]["steady_state"]
    assert st_["site_to_soma_log"] >= -1e-12 and st_["soma_to_site_log"] >= -1e-12
    for key in ("site_to_soma", "soma_to_site"):
        assert all(v is None or v >= -1e-12 for v in r["frequency_response"][key]["log_attenuation"])


def _split(sc, bi, si, frac):
    """Split section si of branch bi into two of the same diameter at fraction frac."""
    out = copy.deepcopy(sc)
    b = out["branches"][bi]
    secs = b.pop("cylinders") if "cylinders" in b else [{"length": b.pop("length"), "diameter": b.pop("diameter")}]
    s = secs[si % len(secs)]
    secs[si % len(secs):si % len(secs) + 1] = [{"length": s["length"] * frac, "diameter": s["diameter"]},
                                               {"length": s["length"] * (1 - frac), "diameter": s["diameter"]}]
    b["cylinders"] = secs
    return out


def _close(a, b, rel=1e-9, abs_=1e-12):
    if a is None or b is None:
        return a is b
    return abs(a - b) <= max(rel * max(abs(a), abs(b)), abs_)


@SETTINGS
@given(scenarios(), st.integers(0, 10**6), st.integers(0, 2), _f(0.05, 0.95))
def test_splitting_changes_nothing(sc, bi, si, frac):
    """S8 — splitting a section into two of the same diameter changes nothing (derived: the
    two-port of a uniform cylinder composes by the cosh/sinh addition theorems): steady-state
    values, logs, frequency response and centroid delays at rel 1e-9."""
    bi %= len(sc["branches"])
    a, b = somaward.solve(sc), somaward.solve(_split(sc, bi, si, frac))
    for key in ("soma_input_resistance_Mohm", "site_input_resistance_Mohm", "electrotonic_distance",
                "centroid_delay_ms", "centroid_delay_soma_to_site_ms", "rho", "rho_inf"):
        assert _close(a[key], b[key]), key
    for key in ("site_to_soma_log", "soma_to_site_log"):
        assert _close(a["attenuation"]["steady_state"][key], b["attenuation"]["steady_state"][key]), key
    for block in ("site_to_soma", "soma_to_site"):
        for key in ("log_attenuation", "phase_deg"):
            for x, y in zip(a["frequency_response"][block][key], b["frequency_response"][block][key], strict=True):
                assert _close(x, y, abs_=1e-9), (block, key)
    for block in ("soma_input_impedance_Mohm", "site_input_impedance_Mohm"):
        mag_a, mag_b = a["frequency_response"][block]["magnitude"], b["frequency_response"][block]["magnitude"]
        for x, y in zip(mag_a, mag_b, strict=True):
            assert _close(x, y), block


@SETTINGS
@given(scenarios(), st.integers(0, 10**6))
def test_killed_le_infinite_le_sealed(sc, pick):
    """S4 generalised (derived): at DC, replacing one terminal's end sealed (YL = 0) → infinite
    (YL = G∞) → killed (YL = ∞) adds leak; every section ratio 1/(cosh L + g sinh L) falls and every
    input conductance rises as g = YL·R∞ grows, so A at the same site does not increase, both
    ways (equal where the terminal is off the relevant side of the path). Logs compared, 1e-12."""
    v = somaward.validate(sc)
    terminals = [i for i, b in enumerate(v["branches"]) if "end" in b]
    t = terminals[pick % len(terminals)]
    base = copy.deepcopy(sc)
    if base["synapse"]["branch"] == f"b{t}":        # keep the site off the (to be) killed end
        b = base["branches"][t]
        total = sum(s["length"] for s in b.get("cylinders", [b]))
        base["synapse"]["distance"] = min(base["synapse"]["distance"], 0.97 * total)
    logs = {}
    for end in ("killed", "infinite", "sealed"):
        logs[end] = copy.deepcopy(base)
        logs[end]["branches"][t]["end"] = end
    out = {e: somaward.solve(s)["attenuation"]["steady_state"] for e, s in logs.items()}
    for key in ("site_to_soma_log", "soma_to_site_log"):
        k, i, s = out["killed"][key], out["infinite"][key], out["sealed"][key]
        assert k >= i - 1e-12 * max(1.0, i) and i >= s - 1e-12 * max(1.0, s), key


def _finite_numbers(node, path="report"):
    if isinstance(node, dict):
        for k, v in node.items():
            _finite_numbers(v, f"{path}.{k}")
    elif isinstance(node, list):
        for i, v in enumerate(node):
            _finite_numbers(v, f"{path}[{i}]")
    elif isinstance(node, float):
        assert math.isfinite(node), path


@SETTINGS
@given(scenarios())
def test_report_json_and_scenario_round_trip(sc):
    """The report is JSON-serialisable with allow_nan=False and survives a round trip; the
    validated scenario validates again unchanged (DEVELOPERS.md contract)."""
    r = somaward.solve(sc)
    text = json.dumps(r, allow_nan=False)
    assert json.loads(text) == r
    v = somaward.validate(sc)
    assert somaward.validate(copy.deepcopy(v)) == v
    assert r["scenario"] == v
    assert somaward.validate(json.loads(json.dumps(r["scenario"]))) == v


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(scenarios(max_branches=5, max_l=50.0))
def test_long_cables_and_high_frequency_stay_finite(sc):
    """L up to 50 per section and frequencies to 10 kHz: no NaN/inf anywhere, every log
    attenuation finite (the synapse is never on a killed end), |A| ≤ 1, phases finite."""
    sc["frequencies_hz"] = [0.0, 0.1, 10.0, 1000.0, 10000.0]
    sc["map_frequency_hz"] = 10000.0
    r = somaward.solve(sc)
    json.dumps(r, allow_nan=False)
    _finite_numbers(r)
    st_ = r["attenuation"]["steady_state"]
    assert st_["site_to_soma_log"] is not None and st_["soma_to_site_log"] is not None
    for key in ("site_to_soma", "soma_to_site"):
        fr = r["frequency_response"][key]
        assert all(v is not None for v in fr["log_attenuation"]) and all(v is not None for v in fr["phase_deg"])
        assert all(0.0 <= m <= UPPER for m in fr["magnitude"])
    assert all(v is not None for v in r["tree_map"]["site_to_soma_log"])


# ------------------------------------------------------------------ deep chains (no recursion)
def _chain_sections(n, d=1.0, big_l=2.0):
    lam = 500.0                                  # d = 1 µm, Rm 20 000, Ri 200 (C2)
    return {"membrane": {"Rm": 20000.0, "Ri": 200.0, "Cm": 1.0},
            "branches": [{"id": "c", "parent": None,
                          "cylinders": [{"length": big_l * lam / n, "diameter": d} for _ in range(n)]}],
            "synapse": {"branch": "c", "distance": big_l * lam}, "frequencies_hz": [0.0],
            "map_spacing_um": 1e7}


def _chain_branches(n, big_l=2.0):
    lam = 500.0
    br = [{"id": f"k{i}", "parent": None if i == 0 else f"k{i - 1}", "length": big_l * lam / n, "diameter": 1.0}
          for i in range(n)]
    return {"membrane": {"Rm": 20000.0, "Ri": 200.0, "Cm": 1.0}, "branches": br,
            "synapse": {"branch": f"k{n - 1}", "distance": big_l * lam / n}, "frequencies_hz": [0.0],
            "map_spacing_um": 1e7}


def _check_chain(r, big_l=2.0):
    """Sealed cylinder, L = 2, site at the tip: V(L)/V(0) = 1/cosh L (S2, Rall 1959); also
    V(0)/V(L) = 1/cosh L (S3b, derived)."""
    st_ = r["attenuation"]["steady_state"]
    assert st_["soma_to_site"] == pytest.approx(1 / math.cosh(big_l), rel=1e-9)
    assert st_["site_to_soma"] == pytest.approx(1 / math.cosh(big_l), rel=1e-9)
    assert r["electrotonic_distance"] == pytest.approx(big_l, rel=1e-9)


@pytest.mark.parametrize("make", [_chain_sections, _chain_branches], ids=["cylinders", "branches"])
def test_chain_beyond_recursion_limit(make):
    """A 3000-deep chain (three times CPython's default recursion limit) solves exactly."""
    _check_chain(somaward.solve(make(3000)))


@pytest.mark.slow
@pytest.mark.parametrize("make", [_chain_sections, _chain_branches], ids=["cylinders", "branches"])
def test_chain_of_1e5(make):
    """Issue 2: a chain of 10⁵ sections (one branch of 10⁵ sections; 10⁵ one-section branches)
    solves with no recursion error and the S2 value. Slow: about 40 s each on 2 cores."""
    _check_chain(somaward.solve(make(100_000)))
