"""Rall's equivalent cylinder (engine/somaward/equivalent.py): S5 of docs/checks.md and more.

Every tree here is invented for these tests (generated from a seed; no published cell). The
trees that meet the conditions are built so by construction: each child's diameter takes a
share w_i of its parent's d^{3/2} (Σ w_i = 1, so d_parent^{3/2} = Σ d_child^{3/2} holds), and each
terminal branch gets the length (L − X_start)·λ(d) that puts its end at the common X = L.
λ = √(Rm·d/(4Ri)) (Rall 1977; C2) is computed here, not taken from the engine.

Sources: Rall 1959, Exp Neurol 1:491 and Rall 1969, Biophys J 9:1483 for the soma + cylinder
admittance (S9); Rall 1962, Ann NY Acad Sci 96:1071 and Rall 1964 (in Neural Theory and Modeling)
for the reduction itself (S5); the S10 independent nodal solver (tests/reference/nodal.py,
mpmath) for full-tree values.
"""

from __future__ import annotations

import copy
import json
import math
import sys
from itertools import pairwise
from pathlib import Path

import jsonschema
import numpy as np
import pytest
from mpmath import mp

import somaward
from somaward import ScenarioError, solve, validate
from somaward.equivalent import (compare_logs, cylinder_scenario, equivalent_diameter_um, methods_sentence,
                                 rule_table_rows, terminal_rows)
from somaward.schema_check import load_schema
from somaward.tree import build_tree

sys.path.insert(0, str(Path(__file__).resolve().parent))
from reference.nodal import NodalTree

MEM = {"Rm": 20000.0, "Ri": 150.0, "Cm": 1.0}
SOMA = {"diameter": 18.0}
FREQS_HZ = [0.0] + [10.0 ** (-1 + 5 * k / 19) for k in range(20)]   # 0 Hz + 20 from 0.1 Hz to 10 kHz
L_TARGET = 0.9


def _lam_um(d_um, mem=MEM):
    """λ = √(Rm·d/(4Ri)) in µm (Rall 1977; C2); Rm Ω·cm², Ri Ω·cm, d µm."""
    return 100.0 * math.sqrt(mem["Rm"] * d_um / (4.0 * mem["Ri"]))


# ------------------------------------------------------------------ invented trees
def _grow(rng, bid, parent, d_um, x_start, depth, symmetric, out):
    """Append branch ``bid`` and its subtree; 3/2 rule and equal terminal X by construction."""
    lam = _lam_um(d_um)
    if depth == 0:
        out.append({"id": bid, "parent": parent, "length": (L_TARGET - x_start) * lam, "diameter": d_um})
        return
    x_len = 0.22 if symmetric else float(rng.uniform(0.1, 0.28))
    n = 2 if symmetric else int(rng.integers(2, 4))
    br = {"id": bid, "parent": parent, "length": x_len * lam, "diameter": d_um}
    if not symmetric and depth == 1:        # S8: one branch as two sections of equal diameter
        br = {"id": bid, "parent": parent, "cylinders": [{"length": 0.4 * x_len * lam, "diameter": d_um},
                                                         {"length": 0.6 * x_len * lam, "diameter": d_um}]}
    out.append(br)
    w = np.full(n, 1.0 / n) if symmetric else rng.dirichlet(np.full(n, 3.0))
    for i, wi in enumerate(w):
        _grow(rng, f"{bid}.{i}", bid, (wi * d_um ** 1.5) ** (2 / 3), x_start + x_len, depth - 1, symmetric, out)


def _ideal_tree(symmetric, with_soma, seed=7, stems=(3.0, 2.0), depth=3):
    """An invented 3/2-rule tree with all terminals sealed at X = L_TARGET, and a site on it."""
    rng = np.random.default_rng(seed)
    branches = []
    for j, d in enumerate(stems):
        _grow(rng, f"s{j}", None, d, 0.0, depth, symmetric, branches)
    terminal = next(b["id"] for b in branches if b["id"].count(".") == depth and b["id"].startswith("s0"))
    sc = {"membrane": dict(MEM), "soma": dict(SOMA) if with_soma else None, "branches": branches,
          "synapse": {"branch": terminal,
                      "distance": 0.5 * branches[[b["id"] for b in branches].index(terminal)]["length"]},
          "frequencies_hz": FREQS_HZ}
    return sc


def _x_of_site(sc):
    """X of the synapse: Σ ℓ/λ along the path (Rall 1977), computed from the branch table."""
    by_id = {b["id"]: b for b in sc["branches"]}
    syn = sc["synapse"]
    x = _x_along(by_id[syn["branch"]], syn["distance"])
    p = by_id[syn["branch"]]["parent"]
    while p is not None:
        x += _x_along(by_id[p], math.inf)
        p = by_id[p]["parent"]
    return x


def _x_along(branch, dist_um):
    secs = branch.get("cylinders", [branch])
    x, left = 0.0, dist_um
    for s in secs:
        step = min(left, s["length"])
        x += step / _lam_um(s["diameter"])
        left -= step
    return x


def _cylinder_closed_form(freq_hz, d_eq, L, x, soma, end="sealed"):
    """S9 (Rall 1959; Rall 1969): soma + sealed cylinder. Y_in = G_s(1+sτ) + k·tanh(kL)/R∞,
    k = √(1+sτ); soma→site A = cosh(k(L−X))/cosh(kL) (S2, Rall 1977); Z_transfer = A/Y_in.
    Killed end (S3, Rall 1977): coth for tanh and sinh for cosh."""
    with mp.workdps(30):
        tau = mp.mpf(MEM["Rm"]) * mp.mpf(MEM["Cm"]) / 1000
        s = mp.mpc(0, 2 * mp.pi * mp.mpf(freq_hz) / 1000)
        k = mp.sqrt(1 + s * tau)
        d = mp.mpf(d_eq)
        r_inf = (2 / mp.pi) * mp.sqrt(mp.mpf(MEM["Rm"]) * mp.mpf(MEM["Ri"])) * (d * 1e-4) ** mp.mpf(-1.5) * 1e-6
        g_s = 0 if soma is None else mp.pi * mp.mpf(soma["diameter"]) ** 2 / mp.mpf(MEM["Rm"]) * mp.mpf("0.01")
        if end == "killed":
            y_in = g_s * (1 + s * tau) + k * mp.coth(k * L) / r_inf
            a = mp.sinh(k * (L - x)) / mp.sinh(k * L)
        else:
            y_in = g_s * (1 + s * tau) + k * mp.tanh(k * L) / r_inf
            a = mp.cosh(k * (L - x)) / mp.cosh(k * L)
        return complex(1 / y_in), complex(a), complex(a / y_in)


def _complex(block, i):
    return block["magnitude"][i] * np.exp(1j * np.radians(block["phase_deg"][i]))


def _rel(a, b):
    return abs(a - b) / abs(b)


# ------------------------------------------------------------------ S5
@pytest.mark.parametrize("with_soma", [True, False], ids=["soma", "no_soma"])
@pytest.mark.parametrize("symmetric", [True, False], ids=["symmetric", "asymmetric"])
def test_S5_ideal_tree_equals_cylinder_closed_form(symmetric, with_soma):
    """S5 (Rall 1962; Rall 1964) against the S9 closed form (Rall 1959; Rall 1969): a 3/2-rule
    tree with sealed terminals all at X = L has, at 0 Hz and 20 frequencies 0.1 Hz–10 kHz, the
    soma input impedance, soma→site attenuation and transfer impedance of a cylinder of
    d_eq = (Σ d_stem^{3/2})^{2/3} and the same L, with the site at the same X (1e-9)."""
    sc = _ideal_tree(symmetric, with_soma)
    r = solve(sc)
    eq = r["equivalent_cylinder"]
    d_eq = (3.0 ** 1.5 + 2.0 ** 1.5) ** (2 / 3)
    assert eq["meets_conditions"], eq["messages"]
    assert eq["cylinder"]["diameter_um"] == pytest.approx(d_eq, rel=1e-12)
    assert eq["cylinder"]["electrotonic_length"] == pytest.approx(L_TARGET, rel=1e-12)
    x = _x_of_site(sc)
    fr = r["frequency_response"]
    for i, freq_hz in enumerate(FREQS_HZ):
        z_soma, a, z_tr = _cylinder_closed_form(freq_hz, d_eq, L_TARGET, x, sc["soma"])
        assert _rel(_complex(fr["soma_input_impedance_Mohm"], i), z_soma) < 1e-9
        assert _rel(_complex(fr["soma_to_site"], i), a) < 1e-9
        assert _rel(_complex(fr["transfer_impedance_Mohm"], i), z_tr) < 1e-9
    for key in ("soma_to_site", "transfer_resistance_Mohm", "soma_input_resistance_Mohm"):
        assert abs(eq["comparison"][key]["relative_error"]) < 1e-9


def test_S5_all_killed_ends():
    """S5 with like killed ends (Rall 1962; 1964) against S3/S9 closed forms (Rall 1977; Rall
    1959): the same invented 3/2-rule tree with every terminal killed matches a killed cylinder
    of d_eq and L in soma input impedance, soma→site attenuation and transfer impedance (1e-9)."""
    sc = _ideal_tree(False, True, seed=5)
    for b in sc["branches"]:
        if b["id"].count(".") == 3:
            b["end"] = "killed"
    r = solve(sc)
    eq = r["equivalent_cylinder"]
    assert eq["meets_conditions"] and eq["end_condition"] == "killed" and eq["cylinder"]["end"] == "killed"
    d_eq, x, fr = (3.0 ** 1.5 + 2.0 ** 1.5) ** (2 / 3), _x_of_site(sc), r["frequency_response"]
    for i, freq_hz in enumerate(FREQS_HZ):
        z_soma, a, z_tr = _cylinder_closed_form(freq_hz, d_eq, L_TARGET, x, SOMA, "killed")
        assert _rel(_complex(fr["soma_input_impedance_Mohm"], i), z_soma) < 1e-9
        assert _rel(_complex(fr["soma_to_site"], i), a) < 1e-9
        assert _rel(_complex(fr["transfer_impedance_Mohm"], i), z_tr) < 1e-9


@pytest.mark.parametrize("with_soma", [True, False], ids=["soma", "no_soma"])
def test_S5_engine_cylinder_matches_engine_tree_over_frequency(with_soma):
    """S5 (Rall 1962; 1964): the module's cylinder, solved by the engine's own tree code, and the
    full tree agree in soma input impedance, soma→site attenuation and transfer impedance at
    0 Hz and 20 frequencies (1e-9 on the complex logs)."""
    sc = validate(_ideal_tree(False, with_soma, seed=11))
    tree = build_tree(sc["branches"], sc["membrane"], sc["soma"])
    cyl = cylinder_scenario(tree, sc, terminal_rows(tree))
    cyl_tree = build_tree(cyl["branches"], cyl["membrane"], cyl["soma"])
    s = 2j * np.pi * np.asarray(FREQS_HZ) * 1e-3
    b = [x["id"] for x in sc["branches"]].index(sc["synapse"]["branch"])
    sec = tree.branch_sections[b][0]
    logs = compare_logs(tree, cyl_tree, sec, sc["synapse"]["distance"], s)
    for t_key, c_key in (("tree_down", "cyl_down"), ("tree_ln_z_soma", "cyl_ln_z_soma"),
                         ("tree_ln_z_transfer", "cyl_ln_z_transfer")):
        assert np.max(np.abs(logs[t_key] - logs[c_key])) < 1e-9


def test_worked_number_three_daughters():
    """Worked number from the 3/2 rule (Rall 1962): three 1 µm daughters need a parent of
    3^{2/3} = 2.0801 µm (*computed*); a tree built with that parent passes the rule."""
    assert equivalent_diameter_um([1.0, 1.0, 1.0]) == pytest.approx(2.0801, abs=5e-5)
    kids = [{"id": f"d{i}", "parent": "p", "length": 200.0, "diameter": 1.0} for i in range(3)]
    sc = {"membrane": MEM, "branches": [{"id": "p", "parent": None, "length": 100.0, "diameter": 2.0801}] + kids,
          "synapse": {"branch": "d0", "distance": 50.0}, "frequencies_hz": [0.0]}
    row = solve(sc)["equivalent_cylinder"]["branch_points"][0]
    assert row["parent"] == "p" and row["children"] == ["d0", "d1", "d2"]
    assert abs(row["ratio"] - 2.0801 ** 1.5 / 3.0) < 1e-12 and abs(row["departure"]) < 1e-4 and row["ok"]


# ------------------------------------------------------------------ departing from the rule
def _family(scale, tolerance=0.05):
    """Invented: soma, trunk 2 µm, daughters a, b sharing its d^{3/2} 60/40 and both ending at
    X = 0.8; then b's diameter is multiplied by ``scale`` at fixed length (λ_b grows, X_b falls)."""
    d_t = 2.0
    d_a, d_b = (0.6 * d_t ** 1.5) ** (2 / 3), (0.4 * d_t ** 1.5) ** (2 / 3)
    x_t = 0.3
    branches = [{"id": "trunk", "parent": None, "length": x_t * _lam_um(d_t), "diameter": d_t},
                {"id": "a", "parent": "trunk", "length": 0.5 * _lam_um(d_a), "diameter": d_a},
                {"id": "b", "parent": "trunk", "length": 0.5 * _lam_um(d_b), "diameter": d_b * scale}]
    return {"membrane": dict(MEM), "soma": dict(SOMA), "branches": branches,
            "synapse": {"branch": "a", "distance": 0.15 * _lam_um(d_a)}, "frequencies_hz": [0.0],
            "equivalent_cylinder": {"tolerance": tolerance}}


SCALES = [1.0, 1.01, 1.02, 1.03, 1.05, 1.08, 1.12, 1.2, 1.35, 1.6]


def _expected_verdict(sc, tolerance):
    """The conditions recomputed here: 3/2 ratio at the trunk's end, and each terminal's X
    against the membrane-area-weighted mean X (the length rule stated in equivalent.py)."""
    br = {b["id"]: b for b in sc["branches"]}
    ratio = br["trunk"]["diameter"] ** 1.5 / (br["a"]["diameter"] ** 1.5 + br["b"]["diameter"] ** 1.5)
    x0 = br["trunk"]["length"] / _lam_um(br["trunk"]["diameter"])
    xs = {t: x0 + br[t]["length"] / _lam_um(br[t]["diameter"]) for t in ("a", "b")}
    area = {t: math.pi * br[t]["diameter"] * br[t]["length"] for t in ("a", "b")}
    L = sum(area[t] * xs[t] for t in xs) / sum(area.values())
    ok = abs(ratio - 1) <= tolerance and all(abs(xs[t] / L - 1) <= tolerance for t in xs)
    return ok, ratio, xs, L


@pytest.mark.parametrize("tolerance", [0.05, 0.15])
def test_departure_and_spread_grow_and_verdict_flips_at_tolerance(tolerance):
    """Derived from the 3/2 rule (Rall 1962): widening one daughter lowers d_p^{3/2}/Σd_c^{3/2}
    and shortens its X, so |departure| and the terminal-X spread grow monotonically; the verdict
    equals the conditions recomputed here and flips from yes to no within the family."""
    deps, spreads, verdicts = [], [], []
    for scale in SCALES:
        sc = _family(scale, tolerance)
        eq = solve(sc)["equivalent_cylinder"]
        ok, ratio, xs, L = _expected_verdict(sc, tolerance)
        assert eq["branch_points"][0]["ratio"] == pytest.approx(ratio, rel=1e-12)
        assert eq["cylinder"]["electrotonic_length"] == pytest.approx(L, rel=1e-12)
        assert eq["terminal_electrotonic_distance_spread"] == pytest.approx(abs(xs["a"] - xs["b"]), rel=1e-9, abs=1e-15)
        assert eq["meets_conditions"] is ok
        deps.append(abs(eq["branch_points"][0]["departure"]))
        spreads.append(eq["terminal_electrotonic_distance_spread"])
        verdicts.append(eq["meets_conditions"])
    assert all(b > a for a, b in pairwise(deps)) and all(b > a for a, b in pairwise(spreads))
    assert verdicts[0] and not verdicts[-1]
    flips = [i for i in range(1, len(verdicts)) if verdicts[i] != verdicts[i - 1]]
    assert len(flips) == 1


@pytest.mark.parametrize("scale", [1.0, 1.05, 1.2, 1.6])
def test_shortcut_errors_equal_independent_solver(scale):
    """S10 (independent computation, mpmath nodal analysis) for the full tree and the S9 closed
    form (Rall 1959; Rall 1969) for the cylinder of d_eq and the area-weighted L recomputed here:
    the reported (cyl − tree)/tree for soma→site attenuation, transfer resistance and soma input
    resistance equal these to 1e-9 (absolute, on a relative error); signs may differ."""
    sc = _family(scale)
    eq = solve(sc)["equivalent_cylinder"]
    _, _, _, L = _expected_verdict(sc, 0.05)
    site = ("a", sc["synapse"]["distance"])
    nt = NodalTree(sc, sites=[site])
    with mp.workdps(30):
        z_soma = mp.re(nt.impedance(0, "soma", "soma"))
        a_down = mp.re(nt.impedance(0, site, "soma")) / z_soma
        z_tr = mp.re(nt.impedance(0, "soma", site))
    x = float(nt.electrotonic_distance(nt.node(site)))
    cz, ca, ctr = (v.real for v in _cylinder_closed_form(0.0, 2.0, L, x, SOMA))   # d_eq = trunk's 2 µm
    cmp_ = eq["comparison"]
    for key, cyl, tree in (("soma_to_site", ca, a_down), ("transfer_resistance_Mohm", ctr, z_tr),
                           ("soma_input_resistance_Mohm", cz, z_soma)):
        ref = (cyl - float(tree)) / float(tree)
        assert abs(cmp_[key]["relative_error"] - ref) < 1e-9, key
    assert cmp_["soma_input_resistance_Mohm"]["tree"] == pytest.approx(float(z_soma), rel=1e-9)


def test_local_values_are_the_full_trees_not_the_cylinders():
    """Rall 1962/1964 (what a point on the cylinder stands for) with S10 (mpmath nodal analysis):
    on an ideal tree the reported site input resistance and site→soma attenuation equal the full
    tree's (1e-9) and differ from the cylinder's own local values at the same X (nodal solution
    of the one-branch cylinder) — here by far more than the tolerance."""
    sc = _ideal_tree(False, True, seed=3)
    r = solve(sc)
    ng = r["equivalent_cylinder"]["comparison"]["not_given_by_cylinder"]
    site = (sc["synapse"]["branch"], sc["synapse"]["distance"])
    nt = NodalTree(sc, sites=[site])
    z_site = mp.re(nt.impedance(0, site, site))
    a_up = mp.re(nt.impedance(0, "soma", site)) / z_site
    assert abs(ng["site_input_resistance_Mohm"] - float(z_site)) <= 1e-9 * float(z_site)
    assert abs(ng["site_to_soma"] - float(a_up)) <= 1e-9 * float(a_up)
    cyl = r["equivalent_cylinder"]["cylinder"]
    x = _x_of_site(sc)
    csc = {"membrane": MEM, "soma": SOMA, "branches": [{"id": "c", "parent": None, "length": cyl["length_um"],
                                                         "diameter": cyl["diameter_um"]}]}
    cs = ("c", x * _lam_um(cyl["diameter_um"]))
    ct = NodalTree(csc, sites=[cs])
    cz = mp.re(ct.impedance(0, cs, cs))
    ca = mp.re(ct.impedance(0, "soma", cs)) / cz
    assert float(z_site) > 1.5 * float(cz) and float(a_up) < float(ca) / 1.5
    assert r["equivalent_cylinder"]["comparison"]["soma_to_site"]["relative_error"] == pytest.approx(0, abs=1e-9)


# ------------------------------------------------------------------ tapers and end conditions
def _two_daughters(end_a="sealed", end_b="sealed", d_a=1.0, d_b=1.0, x_a=0.6, x_b=0.6, trunk=None):
    """Invented: a 2^{2/3}-µm trunk (3/2 rule for two 1 µm daughters) and daughters a, b ending
    at X = 0.2 + x_a, 0.2 + x_b."""
    d_t = (d_a ** 1.5 + d_b ** 1.5) ** (2 / 3)
    t = trunk or {"id": "trunk", "parent": None, "length": 0.2 * _lam_um(d_t), "diameter": d_t}
    return {"membrane": dict(MEM), "soma": dict(SOMA),
            "branches": [t, {"id": "a", "parent": "trunk", "length": x_a * _lam_um(d_a), "diameter": d_a, "end": end_a},
                         {"id": "b", "parent": "trunk", "length": x_b * _lam_um(d_b), "diameter": d_b, "end": end_b}],
            "synapse": {"branch": "a", "distance": 0.3 * _lam_um(d_a)}, "frequencies_hz": [0.0, 50.0]}


def test_taper_step_breaks_the_reduction():
    """Rule stated in equivalent.py (derived from the 3/2 rule with one child, Rall 1962): a
    diameter step 2 → 1 µm inside a branch has ratio 2^{3/2} = 2.828 and breaks the reduction;
    equal-diameter sections (S8) have ratio 1 and do not."""
    d_t = 2 ** (2 / 3)
    taper = {"id": "trunk", "parent": None, "cylinders": [{"length": 50.0, "diameter": 2.0 * d_t},
                                                         {"length": 50.0, "diameter": d_t}]}
    eq = solve(_two_daughters(trunk=taper))["equivalent_cylinder"]
    (join,) = eq["cylinder_joins"]
    assert join["branch"] == "trunk" and join["ratio"] == pytest.approx(2 ** 1.5, rel=1e-12) and not join["ok"]
    assert eq["breaks"]["cylinder_joins"] == ["trunk"] and not eq["meets_conditions"]
    assert not eq["conditions"]["three_halves_rule_at_cylinder_joins"]
    even = dict(taper, cylinders=[{"length": 50.0, "diameter": d_t}, {"length": 50.0, "diameter": d_t}])
    eq2 = solve(_two_daughters(trunk=even))["equivalent_cylinder"]
    assert eq2["cylinder_joins"][0]["ratio"] == 1.0 and eq2["meets_conditions"], eq2["messages"]


def test_mixed_ends_name_the_odd_terminal():
    """Rall 1962/1964 condition of like ends: one killed terminal among sealed ones breaks it,
    and the killed terminal is the one named."""
    sc = _two_daughters(end_b="killed")
    sc["branches"].append({"id": "c", "parent": "trunk", "length": 0.6 * _lam_um(1.0), "diameter": 1.0})
    sc["branches"][0]["diameter"] = 3 ** (2 / 3)
    eq = solve(sc)["equivalent_cylinder"]
    assert eq["conditions"]["three_halves_rule_at_branch_points"]
    assert not eq["conditions"]["like_ends"] and eq["end_condition"] == "mixed"
    assert eq["breaks"]["terminals"] == ["b"] and eq["cylinder"]["end"] == "sealed"


@pytest.mark.parametrize("freq_hz", [0.0, 50.0])
def test_infinite_ends_need_no_equal_X(freq_hz):
    """Derived (S1, Rall 1977; S9, Rall 1959): with every terminal infinite and the 3/2 rule at
    each branch point, each subtree presents k/R∞(d) at its root, so the soma sees
    G_s(1+sτ) + k/R∞(d_eq) whatever the terminal X; the verdict is yes with unequal X."""
    sc = _two_daughters("infinite", "infinite", x_a=0.3, x_b=1.1)
    sc["frequencies_hz"] = [freq_hz]
    r = solve(sc)
    eq = r["equivalent_cylinder"]
    assert eq["meets_conditions"] and not eq["conditions"]["equal_terminal_electrotonic_distance_required"]
    with mp.workdps(30):
        tau = mp.mpf(MEM["Rm"]) * MEM["Cm"] / 1000
        s = mp.mpc(0, 2 * mp.pi * freq_hz / 1000)
        k = mp.sqrt(1 + s * tau)
        d = mp.mpf(2.0) ** (mp.mpf(2) / 3)
        r_inf = (2 / mp.pi) * mp.sqrt(mp.mpf(MEM["Rm"]) * MEM["Ri"]) * (d * 1e-4) ** mp.mpf(-1.5) * 1e-6
        g_s = mp.pi * mp.mpf(SOMA["diameter"]) ** 2 / MEM["Rm"] * mp.mpf("0.01")
        z = complex(1 / (g_s * (1 + s * tau) + k / r_inf))
    assert _rel(_complex(r["frequency_response"]["soma_input_impedance_Mohm"], 0), z) < 1e-9
    assert abs(eq["comparison"]["soma_input_resistance_Mohm"]["relative_error"]) < 1e-9


def test_lumped_loads_scaled_by_d32_reduce_and_unscaled_break():
    """Rall 1962/1964 like ends, for lumped loads: G and C ∝ d^{3/2} is the same load normalised
    by G∞ ∝ d^{3/2} (C4), so the tree reduces (engine tree vs engine cylinder, S5 derived, at
    0 and 50 Hz); an unscaled load breaks it."""
    d_a, d_b = 1.0, 0.5
    sc = _two_daughters({"G": 2.0, "C": 3.0}, {"G": 2.0 * d_b ** 1.5, "C": 3.0 * d_b ** 1.5}, d_a=d_a, d_b=d_b)
    eq = solve(sc)["equivalent_cylinder"]
    assert eq["meets_conditions"], eq["messages"]
    for key in ("soma_to_site", "transfer_resistance_Mohm", "soma_input_resistance_Mohm"):
        assert abs(eq["comparison"][key]["relative_error"]) < 1e-9
    bad = _two_daughters({"G": 2.0, "C": 3.0}, {"G": 2.0, "C": 3.0}, d_a=d_a, d_b=d_b)
    eq_bad = solve(bad)["equivalent_cylinder"]
    assert not eq_bad["conditions"]["like_ends"] and set(eq_bad["breaks"]["terminals"]) == {"a", "b"}


@pytest.mark.parametrize("case", ["killed", "beyond", "no_soma", "one_stem", "loads"])
def test_report_is_finite_json(case):
    """Common practice, no source: the block is JSON with no NaN or inf, also when the synapse
    lies beyond the cylinder's end (then the cylinder's values are null, not invented)."""
    sc = {"killed": lambda: _two_daughters("killed", "killed"),
          "beyond": lambda: _two_daughters(x_a=1.5, x_b=0.2),
          "no_soma": lambda: dict(_two_daughters(), soma=None),
          "one_stem": lambda: {"membrane": MEM,
                               "branches": [{"id": "c", "parent": None, "length": 300.0, "diameter": 1.0}],
                               "synapse": {"branch": "c", "distance": 300.0}, "frequencies_hz": [0.0]},
          "loads": lambda: _two_daughters({"G": 0.0, "C": 1.0}, {"G": 0.0, "C": 0.0})}[case]()
    site_branch = sc["branches"][-1 if case == "one_stem" else 1]
    sc["synapse"]["distance"] = min(sc["synapse"]["distance"], 0.95 * site_branch["length"])
    if case == "beyond":
        sc["synapse"]["distance"] = 1.4 * _lam_um(1.0)
    eq = solve(sc)["equivalent_cylinder"]
    json.dumps(eq, allow_nan=False)
    cmp_ = eq["comparison"]
    assert cmp_["site_beyond_cylinder"] is (case == "beyond")
    if case == "beyond":
        assert cmp_["soma_to_site"]["cylinder"] is None and cmp_["soma_to_site"]["tree"] > 0
    if case == "one_stem":     # a single cylinder is its own equivalent cylinder (derived)
        assert eq["meets_conditions"] and abs(cmp_["soma_to_site"]["relative_error"]) < 1e-12


# ------------------------------------------------------------------ schema and export hooks
@pytest.mark.parametrize("block, ok", [
    (None, True), ({}, True), ({"tolerance": 0.1}, True), ({"tolerance": 0}, True), ({"tolerance": 1}, True),
    ({"tolerance": -0.01}, False), ({"tolerance": 1.5}, False), ({"tolerance": "5%"}, False),
    ({"tolerence": 0.1}, False), (0.05, False)])
def test_schema_equivalent_cylinder_key(block, ok):
    """Common practice, no source: the engine's validator and the jsonschema package (an
    independent library) accept and reject the key alike; errors name the JSON path; the default
    tolerance 0.05 is filled in and the validated scenario validates again unchanged."""
    sc = _two_daughters()
    if block is not None:
        sc["equivalent_cylinder"] = block
    v = jsonschema.Draft202012Validator(load_schema())
    assert v.is_valid(copy.deepcopy(sc)) is ok
    if not ok:
        with pytest.raises(ScenarioError, match=r"^equivalent_cylinder"):
            validate(sc)
        return
    out = validate(sc)
    expected = 0.05 if not block or "tolerance" not in block else block["tolerance"]
    assert out["equivalent_cylinder"] == {"tolerance": expected}
    assert validate(out) == out and v.is_valid(out)
    assert solve(sc)["equivalent_cylinder"]["tolerance"] == expected


def test_tolerance_moves_the_verdict():
    """Common practice, no source: the same slightly-off tree (3/2 ratio 0.97) fails at
    tolerance 0.01 and passes at 0.05."""
    sc = _two_daughters()
    sc["branches"][0]["diameter"] *= 0.97 ** (2 / 3)
    ratio = sc["branches"][0]["diameter"] ** 1.5 / 2.0
    assert ratio == pytest.approx(0.97, rel=1e-12)
    strict = solve(dict(sc, equivalent_cylinder={"tolerance": 0.01}))["equivalent_cylinder"]
    loose = solve(dict(sc, equivalent_cylinder={"tolerance": 0.05}))["equivalent_cylinder"]
    assert strict["breaks"]["branch_points"] == ["trunk"] and not strict["meets_conditions"]
    assert loose["meets_conditions"]


def test_rule_table_and_methods_sentence():
    """Common practice, no source: the export hooks give a block of branch points and a block of
    diameter steps with the reported ratios, headed by quantity keys; the methods text names the
    failing step by its cylinders (counted from 1), gives the verdict and the tolerance, and says
    how far off the cylinder is with a sign word ("underestimated by 33 %"), never a signed
    "misestimated"."""
    from somaward import quantities

    d_t = 2 ** (2 / 3)
    taper = {"id": "trunk", "parent": None, "cylinders": [{"length": 50.0, "diameter": 1.5 * d_t},
                                                         {"length": 50.0, "diameter": d_t}]}
    r = solve(_two_daughters(trunk=taper))
    blocks = rule_table_rows(r)
    assert [len(rows) for _, _, rows in blocks] == [1, 1]
    (_, bp_cols, bp_rows), (_, cj_cols, cj_rows) = blocks
    for col in bp_cols + cj_cols:
        quantities.quantity(col)                     # every column is a defined quantity
    bp = dict(zip(bp_cols, bp_rows[0], strict=True))
    assert bp["equivalent_cylinder.branch_points[].parent"] == "trunk"
    assert bp["equivalent_cylinder.branch_points[].children"] == ["a", "b"]
    assert bp["equivalent_cylinder.branch_points[].ratio"] == r["equivalent_cylinder"]["branch_points"][0]["ratio"]
    assert bp["equivalent_cylinder.branch_points[].ok"] is True
    cj = dict(zip(cj_cols, cj_rows[0], strict=True))
    assert cj["equivalent_cylinder.cylinder_joins[].ok"] is False
    assert cj["equivalent_cylinder.cylinder_joins[].cylinder"] == 2
    assert cj["equivalent_cylinder.cylinder_joins[].ratio"] == pytest.approx(1.5 ** 1.5, rel=1e-12)
    text = methods_sentence(r)
    assert text.endswith(".") and "did not meet" in text and "5 %" in text and "Rall 1962" in text
    assert "not met between cylinders 1 and 2 of trunk" in text
    assert "misestimated" not in text and "−" not in text.split("At steady state")[1]
    err = r["equivalent_cylinder"]["comparison"]["soma_input_resistance_Mohm"]["relative_error"]
    word = "overestimated" if err > 0 else "underestimated"
    assert f"{word} the input resistance at the soma by" in text


def test_methods_sentence_without_branch_points_or_steps():
    """Derived: one uniform cylinder is its own equivalent cylinder (Rall 1962), so the sentence
    says there is nothing for the 3/2 rule to check and that the cylinder matches."""
    one = {"membrane": MEM, "soma": SOMA,
           "branches": [{"id": "d", "parent": None, "length": 400.0, "diameter": 1.5}],
           "synapse": {"branch": "d", "distance": 200.0}}
    r = solve(one)
    assert rule_table_rows(r) == []
    text = methods_sentence(r)
    assert "no branch point and no diameter step" in text and "branch point(s)" not in text
    assert "matched the input resistance at the soma to within 0.01 %" in text
    assert "The tree met these conditions." in text


def test_block_present_for_every_tree():
    """Common practice, no source: the report carries the block for a tree that fails too."""
    assert "equivalent_cylinder" in solve(_two_daughters(x_a=0.4, x_b=1.0))
    assert "equivalent_cylinder" in somaward.solve(dict(_two_daughters(), soma=None))


def test_cylinder_curve_is_the_sealed_cylinder_profile():
    """The cylinder's soma→site curve is cosh(L − X)/cosh(L) for sealed terminals, whatever the
    soma (Rall 1959: with current entering at X = 0 the distal profile depends only on what lies
    distal); checked against mpmath. Tree invented for the test."""
    import mpmath

    sc = {"membrane": {"Rm": 20000, "Ri": 150}, "soma": {"diameter": 15},
          "branches": [{"id": "stem", "parent": None, "length": 300, "diameter": 2.0},
                       {"id": "d1", "parent": "stem", "length": 200, "diameter": 1.2},
                       {"id": "d2", "parent": "stem", "length": 150, "diameter": 0.9}],
          "synapse": {"branch": "d1", "distance": 50}}
    cyl = somaward.solve(sc)["equivalent_cylinder"]["cylinder"]
    L = mpmath.mpf(cyl["electrotonic_length"])
    xs, a = cyl["curve"]["electrotonic_distance"], cyl["curve"]["soma_to_site"]
    assert xs[0] == 0.0 and xs[-1] == pytest.approx(float(L), rel=1e-12)
    for x, v in zip(xs, a, strict=True):
        assert v == pytest.approx(float(mpmath.cosh(L - x) / mpmath.cosh(L)), rel=1e-12)
