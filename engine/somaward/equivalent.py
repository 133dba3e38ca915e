"""Rall's equivalent cylinder: the conditions for the reduction, the cylinder, and its error.

Rall (1962; 1964) showed that a passive tree collapses onto one cylinder when

1. at every branch point the **3/2 power rule** holds, d_parent^{3/2} = Σ d_child^{3/2}
   (d_parent at the parent's distal end, each d_child at the child's proximal section);
2. every terminal lies at the **same electrotonic distance** X = Σ ℓ_i/λ_i from the soma;
3. Rm and Ri are **uniform** over the dendrites (always true here: the engine takes one
   membrane; the soma may keep its own Rm, and the cylinder keeps the same soma);
4. the terminals have **like ends**: all sealed, all killed, or all infinite (for infinite ends
   condition 2 is not needed: every subtree then presents the admittance of a semi-infinite
   cylinder), or all lumped loads whose G and C scale as d^{3/2} (the same load normalised by the
   terminal's G∞ ∝ d^{3/2}).

Then the voltage for current injected at the soma depends on X only, and the tree's input
admittance at the soma equals that of one cylinder of diameter

    d_eq = (Σ_stems d_stem^{3/2})^{2/3}

(over the stems leaving the soma; the trunk's own diameter when there is one stem) and
electrotonic length L = the common terminal X, at every frequency (Laplace variable s). With a
soma of conductance G_s and a sealed end (Rall 1959; Rall 1969)

    Y_in(s) = G_s (1 + sτ) + √(1 + sτ) · tanh(√(1 + sτ) L) / R∞(d_eq).

**What the cylinder represents.** Soma→site attenuation and the transfer resistance for a site
at electrotonic distance X equal the cylinder's at X. A point on the cylinder, however, stands
for input spread over *every* branch at that X at once; a single synapse's own input resistance
and its site→soma attenuation are *not* given by the cylinder, and are reported here from the
full tree.

**Rules chosen here** (stated also in the report):

* Tolerance: each departure is relative — |ratio − 1| at branch points and cylinder joins,
  |X_t/L − 1| at terminals, |g_t/ḡ − 1| for normalised loads — and must be ≤ ``tolerance``
  (scenario key ``equivalent_cylinder.tolerance``, default 0.05).
* Tapers: a step in diameter inside a branch (a join between two cylinders) is a branch point
  with one child, so the 3/2 rule there reads d_prev^{3/2} = d_next^{3/2}: a stepwise taper
  breaks the reduction unless its steps are within the tolerance. (Trees whose Σ d^{3/2} at each
  X varies smoothly reduce to a non-uniform equivalent cable instead; that is not done here.)
* L for unequal terminal X: the membrane-area-weighted mean of the terminal X values, each
  terminal weighted by the membrane area π·d·ℓ of its terminal branch; the range min–max is
  reported beside it. With infinite ends the cylinder is given the largest terminal X (any
  length gives the same semi-infinite cylinder; this one contains every site).
* Mixed ends: the cylinder takes the end shared by most terminals, and the verdict is no.

The cylinder is built as a one-branch scenario and solved by the engine's own tree code
(:mod:`tree`, :mod:`sites`), so its numbers come from the same machinery as the tree's.

References
----------
.. [1] Rall W (1959) Branching dendritic trees and motoneuron membrane resistivity.
   Exp Neurol 1:491–527.
.. [2] Rall W (1962) Theory of physiological properties of dendrites. Ann NY Acad Sci 96:1071–1092.
.. [3] Rall W (1964) Theoretical significance of dendritic trees for neuronal input-output
   relations. In: Reiss RF (ed) Neural Theory and Modeling. Stanford University Press.
.. [4] Rall W (1969) Time constants and electrotonic length of membrane cylinders and neurons.
   Biophys J 9:1483–1508.
"""

import math
from collections import Counter

import numpy as np

from .quantities import label as _label, render_markup as _render, unit as _unit
from .sites import point_terms
from .topology import children, electrotonic_distance, roots, sections_of_branch
from .tree import END_CODES, build_tree, solve_tree

__all__ = ["DEFAULT_TOLERANCE", "rule_ratio", "equivalent_diameter_um", "branch_point_rows",
           "cylinder_join_rows", "terminal_rows", "cylinder_scenario", "cylinder_curve", "compare_logs",
           "equivalent_cylinder", "rule_table_rows", "methods_sentence"]

DEFAULT_TOLERANCE = 0.05
_END_NAMES = {v: k for k, v in END_CODES.items()}
_BEYOND = 1e-12          # relative slack when placing the site on the cylinder


def rule_ratio(d_parent_um, d_children_um):
    """d_parent^{3/2} / Σ d_child^{3/2} at one branch point: 1 when the 3/2 power rule holds (Rall 1962).

    Parameters
    ----------
    d_parent_um : float
        Diameter of the parent at the branch point (µm).
    d_children_um : sequence of float
        Diameters of the children at the branch point (µm).

    Returns
    -------
    float
        The ratio (dimensionless).

    Examples
    --------
    A parent of 2^{2/3} µm with two daughters of 1 µm meets the rule:

    >>> round(rule_ratio(2 ** (2 / 3), [1.0, 1.0]), 12)
    1.0
    """
    return float(d_parent_um) ** 1.5 / math.fsum(float(d) ** 1.5 for d in d_children_um)


def equivalent_diameter_um(stem_diameters_um):
    """d_eq = (Σ d_stem^{3/2})^{2/3}: the diameter of the cylinder equivalent to the stems (Rall 1962).

    Parameters
    ----------
    stem_diameters_um : sequence of float
        Diameters of the stems leaving the soma (µm).

    Returns
    -------
    float
        d_eq (µm).

    Examples
    --------
    >>> round(equivalent_diameter_um([1.0, 1.0, 1.0]), 4)     # 3^{2/3}
    2.0801
    """
    return math.fsum(float(d) ** 1.5 for d in stem_diameters_um) ** (2.0 / 3.0)


def _ok(departure, tolerance):
    return bool(abs(departure) <= tolerance * (1 + 1e-12))


def branch_point_rows(tree, tolerance=DEFAULT_TOLERANCE):
    """The 3/2 power rule at every branch point (branches with children), in branch-table order.

    Condition 1 of the reduction (Rall 1962; 1964): d_parent^{3/2} = Σ d_child^{3/2}, with the
    parent's distal cylinder and each child's proximal cylinder.

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    tolerance : float, default DEFAULT_TOLERANCE (0.05)
        Largest relative departure that still counts as meeting the rule (dimensionless).

    Returns
    -------
    list of dict
        ``parent`` (branch id), ``children`` (ids), ``parent_diameter_um`` (distal section),
        ``child_diameters_um`` (proximal sections), ``ratio`` = d_p^{3/2}/Σ d_c^{3/2},
        ``departure`` = ratio − 1 (signed), ``ok`` (|departure| ≤ tolerance).
    """
    rows = []
    for b, kids in enumerate(children(tree.branch_parent)):
        if not kids:
            continue
        d_p = float(tree.diameter_um[tree.branch_sections[b][1]])
        d_c = [float(tree.diameter_um[tree.branch_sections[c][0]]) for c in kids]
        ratio = rule_ratio(d_p, d_c)
        rows.append({"parent": tree.branch_ids[b], "children": [tree.branch_ids[c] for c in kids],
                     "parent_diameter_um": d_p, "child_diameters_um": d_c, "ratio": ratio,
                     "departure": ratio - 1.0, "ok": _ok(ratio - 1.0, tolerance)})
    return rows


def cylinder_join_rows(tree, tolerance=DEFAULT_TOLERANCE):
    """The 3/2 power rule at joins between the cylinders of one branch: d_prev^{3/2} = d_next^{3/2}.

    A diameter step inside a branch is a branch point with one child (module docstring).

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    tolerance : float, default DEFAULT_TOLERANCE (0.05)
        Largest relative departure that still counts as meeting the rule (dimensionless).

    Returns
    -------
    list of dict
        ``branch``, ``cylinder`` (number of the cylinder after the step, counted from 1 at the
        branch's proximal end, so the step lies between cylinders ``cylinder - 1`` and
        ``cylinder``), ``diameter_before_um``, ``diameter_after_um``, ``ratio``, ``departure``, ``ok``.
    """
    rows = []
    for b, bid in enumerate(tree.branch_ids):
        idx = sections_of_branch(tree, b)
        for j in range(1, len(idx)):
            d0, d1 = float(tree.diameter_um[idx[j - 1]]), float(tree.diameter_um[idx[j]])
            ratio = rule_ratio(d0, [d1])
            rows.append({"branch": bid, "cylinder": j + 1, "diameter_before_um": d0, "diameter_after_um": d1,
                         "ratio": ratio, "departure": ratio - 1.0, "ok": _ok(ratio - 1.0, tolerance)})
    return rows


def _terminal_geometry(tree):
    """(branch index, distal section, terminal X, membrane area µm²) of each terminal branch."""
    out = []
    for b in np.flatnonzero(tree.terminal_branch):
        idx = sections_of_branch(tree, int(b))
        last = idx[-1]
        x_end = float(electrotonic_distance(tree, last))
        area = math.fsum(math.pi * tree.diameter_um[i] * tree.length_um[i] for i in idx)
        out.append((int(b), last, x_end, area))
    return out


def _end_name(tree, sec):
    return _END_NAMES[int(tree.end_code[sec])]


def _common_end(tree, geometry):
    """The end kind shared by most terminals (first seen wins a tie) and whether all share it."""
    names = [_end_name(tree, sec) for _, sec, _, _ in geometry]
    counts = Counter(names)
    best = max(counts.values())
    common = next(n for n in names if counts[n] == best)
    return common, len(counts) == 1


def _load_scales(tree, geometry):
    """G/d^{3/2} (µS/µm^{3/2}) and C/d^{3/2} (nF/µm^{3/2}) of each terminal's lumped load."""
    g, c = [], []
    for _, sec, _, _ in geometry:
        w = float(tree.diameter_um[sec]) ** 1.5
        g.append(float(tree.end_g_uS[sec]) / w)
        c.append(float(tree.end_c_nF[sec]) / w)
    return g, c


def _rel(value, ref):
    """Relative departure (value − ref)/ref; 0 when both are 0 (loads are ≥ 0)."""
    return 0.0 if value == ref else (value - ref) / ref if ref != 0 else 1.0


def terminal_rows(tree, tolerance=DEFAULT_TOLERANCE):
    """Terminal X, end conditions, the chosen L and which terminals break conditions 2 and 4.

    Condition 2 (every terminal at the same electrotonic distance X = Σ ℓ_i/λ_i) and condition 4
    (like ends) of Rall 1962; 1964. L for unequal X is the rule chosen here: the
    membrane-area-weighted mean of the terminal X, or the largest X with infinite ends.

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    tolerance : float, default DEFAULT_TOLERANCE (0.05)
        Largest relative departure that still counts as meeting the rule (dimensionless).

    Returns
    -------
    dict
        ``rows`` (per terminal: ``branch``, ``electrotonic_distance``, ``membrane_area_um2``,
        ``departure`` = X/L − 1, ``x_ok``, ``end``, ``end_ok``, ``ok``), ``electrotonic_length`` L
        (area-weighted mean, or the largest X for infinite ends), ``x_min``, ``x_max``, ``end``,
        ``like_ends``, ``equal_x_required``, ``load`` (the cylinder's load per d^{3/2}:
        ``g_uS_per_d32`` in µS/µm^{3/2} and ``c_nF_per_d32`` in nF/µm^{3/2}, or None).
    """
    geo = _terminal_geometry(tree)
    xs = [x for _, _, x, _ in geo]
    areas = [a for _, _, _, a in geo]
    common, like = _common_end(tree, geo)
    infinite = common == "infinite"
    area_weighted_x = math.fsum(a * x for a, x in zip(areas, xs, strict=True)) / math.fsum(areas)
    electrotonic_length = max(xs) if infinite else area_weighted_x
    end_ok = [_end_name(tree, sec) == common for _, sec, _, _ in geo]
    load = None
    if common == "load":
        g, c = _load_scales(tree, geo)
        sel = [i for i, e in enumerate(end_ok) if e]
        g_ref, c_ref = (math.fsum(v[i] for i in sel) / len(sel) for v in (g, c))
        for i in sel:
            end_ok[i] = _ok(max(abs(_rel(g[i], g_ref)), abs(_rel(c[i], c_ref))), tolerance)
        load = {"g_uS_per_d32": g_ref, "c_nF_per_d32": c_ref}
    rows = []
    for (b, sec, x, area), e_ok in zip(geo, end_ok, strict=True):
        dep = x / electrotonic_length - 1.0 if electrotonic_length > 0 else 0.0
        x_ok = infinite or _ok(dep, tolerance)
        rows.append({"branch": tree.branch_ids[b], "electrotonic_distance": x, "membrane_area_um2": area,
                     "departure": dep, "x_ok": bool(x_ok), "end": _end_name(tree, sec),
                     "end_ok": bool(e_ok), "ok": bool(x_ok and e_ok)})
    return {"rows": rows, "electrotonic_length": electrotonic_length, "x_min": min(xs), "x_max": max(xs), "end": common,
            "like_ends": bool(like and all(end_ok)), "equal_x_required": not infinite, "load": load}


def _stem_diameters_um(tree):
    return [float(tree.diameter_um[tree.branch_sections[b][0]]) for b in roots(tree.branch_parent)]


def cylinder_scenario(tree, scenario, terminals):
    """The equivalent cylinder as a one-branch scenario (same membrane, same soma).

    Diameter d_eq = (Σ d_stem^{3/2})^{2/3}, electrotonic length L from :func:`terminal_rows`,
    length L·λ(d_eq), and the terminals' common end (a load scaled by d_eq^{3/2}); Rall 1962; 1964.

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    scenario : dict
        The validated scenario (``membrane``, ``soma``).
    terminals : dict
        Output of :func:`terminal_rows` (``electrotonic_length``, ``end``, ``load``).

    Returns
    -------
    dict
        ``branches`` (one branch ``"equivalent_cylinder"``), ``membrane``, ``soma``,
        ``diameter_um``, ``lambda_um``, ``length_um``, ``electrotonic_length``.
    """
    from .membrane import space_constant_um

    mem = scenario["membrane"]
    d_eq = equivalent_diameter_um(_stem_diameters_um(tree))
    lambda_um = float(space_constant_um(d_eq, mem["Rm"], mem["Ri"]))
    end = terminals["end"]
    if end == "load":
        w = d_eq ** 1.5
        end = {"G": terminals["load"]["g_uS_per_d32"] * w * 1e3, "C": terminals["load"]["c_nF_per_d32"] * w * 1e3}
    length_um = terminals["electrotonic_length"] * lambda_um
    branch = {"id": "equivalent_cylinder", "parent": None, "length": length_um, "diameter": d_eq, "end": end}
    return {"branches": [branch], "membrane": mem, "soma": scenario.get("soma"), "diameter_um": d_eq,
            "lambda_um": lambda_um, "length_um": length_um, "electrotonic_length": terminals["electrotonic_length"]}


def compare_logs(tree, cyl_tree, sec, y_um, s_per_ms, sol=None):
    """Complex logs at one site of the full tree and at the same X on the equivalent cylinder.

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    cyl_tree : Tree
        The one-branch cylinder, built from :func:`cylinder_scenario`.
    sec : int
        Section of ``tree`` holding the site.
    y_um : float
        Distance of the site from that section's proximal end (µm).
    s_per_ms : array_like
        Laplace variables s (1/ms).
    sol : TreeSolution, optional
        ``solve_tree(tree, s_per_ms)`` if the caller has it already.

    Returns
    -------
    dict of (F,) complex arrays (None for the cylinder when X lies beyond its end)
        ``tree_down``/``cyl_down`` = ln A soma→site; ``tree_ln_z_soma``/``cyl_ln_z_soma`` and
        ``tree_ln_z_transfer``/``cyl_ln_z_transfer`` (ln of MΩ); ``tree_up`` = ln A site→soma and
        ``tree_ln_z_site`` (full tree only: the cylinder does not give them).
    """
    s = np.atleast_1d(np.asarray(s_per_ms))
    sol = solve_tree(tree, s) if sol is None else sol      # a solution of ``tree`` at these s
    t = point_terms(sol, [sec], [y_um])
    ln_y_site = np.log(t["y_node_uS"][0])
    out = {"tree_down": t["down"][0], "tree_up": t["up"][0], "tree_ln_z_site": -ln_y_site,
           "tree_ln_z_soma": -np.log(sol.y_root_uS), "tree_ln_z_transfer": t["up"][0] - ln_y_site}
    x_site = float(electrotonic_distance(tree, sec, y_um))
    y_cyl = x_site * float(cyl_tree.lambda_um[0])
    if y_cyl > float(cyl_tree.length_um[0]) * (1 + _BEYOND):
        return {**out, "cyl_down": None, "cyl_ln_z_soma": -np.log(solve_tree(cyl_tree, s).y_root_uS),
                "cyl_ln_z_transfer": None}
    csol = solve_tree(cyl_tree, s)
    c = point_terms(csol, [0], [min(y_cyl, float(cyl_tree.length_um[0]))])
    ln_z_soma = -np.log(csol.y_root_uS)
    return {**out, "cyl_down": c["down"][0], "cyl_ln_z_soma": ln_z_soma,
            "cyl_ln_z_transfer": c["down"][0] + ln_z_soma}


def _num(x):
    if x is None:
        return None
    x = float(np.real(x))
    return x if math.isfinite(x) else None


def _pair(ln_tree, ln_cyl):
    """Tree value, cylinder value and (cyl − tree)/tree = expm1(ln cyl − ln tree), from logs."""
    tree_v = _num(np.exp(np.real(ln_tree)))
    if ln_cyl is None:
        return {"tree": tree_v, "cylinder": None, "relative_error": None}
    cyl_v = _num(np.exp(np.real(ln_cyl)))
    with np.errstate(invalid="ignore"):
        err = _num(np.expm1(np.real(ln_cyl) - np.real(ln_tree)))
    return {"tree": tree_v, "cylinder": cyl_v, "relative_error": err}


NOT_GIVEN = ("A point on the equivalent cylinder stands for input spread over every branch at the same "
             "electrotonic distance, so the cylinder does not give the input resistance at the synapse or the "
             "voltage ratio from the synapse to the recording site; the values here are the full tree's.")


def _comparison(tree, cyl_tree, sec, y_um, sol_dc=None):
    logs = compare_logs(tree, cyl_tree, sec, y_um, [0.0], sol_dc)
    logs = {k: (v[0] if v is not None else None) for k, v in logs.items()}
    x_site = float(electrotonic_distance(tree, sec, y_um))
    beyond = logs["cyl_down"] is None
    return {
        "electrotonic_distance": x_site,
        "site_beyond_cylinder": beyond,
        "soma_to_site": _pair(logs["tree_down"], logs["cyl_down"]),
        "transfer_resistance_Mohm": _pair(logs["tree_ln_z_transfer"], logs["cyl_ln_z_transfer"]),
        "soma_input_resistance_Mohm": _pair(logs["tree_ln_z_soma"], logs["cyl_ln_z_soma"]),
        "not_given_by_cylinder": {"site_to_soma": _num(np.exp(logs["tree_up"])),
                                  "site_input_resistance_Mohm": _num(np.exp(logs["tree_ln_z_site"])),
                                  "note": NOT_GIVEN},
        "note": ("The synapse lies beyond the cylinder's end (its X exceeds the cylinder's L), so the "
                 "cylinder has no point to compare with." if beyond else
                 "Cylinder values are at the synapse's electrotonic distance X; relative_error = "
                 "(cylinder − tree)/tree, at 0 Hz."),
    }


LENGTH_RULE = ("L is the membrane-area-weighted mean of the terminal electrotonic distances (each terminal "
               "weighted by the membrane area of its terminal branch); with infinite ends, the largest terminal X.")
TAPER_RULE = ("A diameter step between two cylinders of one branch is checked as a branch point with one child "
              "(d_before^3/2 = d_after^3/2), so a stepwise taper breaks the reduction unless its steps are "
              "within the tolerance.")


def _signed_pct(fraction):
    return f"{100 * fraction:+.3g} %".replace("-", "−")


def _messages(points, joins, terms, tolerance):
    """One sentence per broken condition; branches named by id, a branch's cylinders counted from 1."""
    tol = f"{100 * tolerance:g} %"
    bp_ratio, cj_ratio = _label(f"{_BP}.ratio"), _label(f"{_CJ}.ratio")
    um = _unit(f"{_CJ}.diameter_before_um")
    out = [f"Branch point at the end of {r['parent']}: {bp_ratio} = {r['ratio']:.4g}, a departure "
           f"of {_signed_pct(r['departure'])} from the 3/2 power rule, beyond the tolerance of {tol}."
           for r in points if not r["ok"]]
    out += [f"Diameter step in {r['branch']} between cylinders {r['cylinder'] - 1} and {r['cylinder']}: "
            f"{r['diameter_before_um']:g} → {r['diameter_after_um']:g} {um}, {cj_ratio} = {r['ratio']:.4g}, "
            f"a departure of {_signed_pct(r['departure'])} from the 3/2 power rule, beyond the tolerance of {tol}."
            for r in joins if not r["ok"]]
    for r in terms["rows"]:
        if not r["end_ok"]:
            if r["end"] == terms["end"] == "load":
                out.append(f"Terminal {r['branch']}: its load's G and C are not in proportion to d^3/2 like the "
                           f"other terminals' loads, within the tolerance of {tol}.")
            else:
                out.append(f"Terminal {r['branch']}: its end is {r['end']}, the others' {terms['end']}.")
        if not r["x_ok"]:
            out.append(f"Terminal {r['branch']}: X = {r['electrotonic_distance']:.4g}, a departure of "
                       f"{_signed_pct(r['departure'])} from L = {terms['electrotonic_length']:.4g}, beyond the "
                       f"tolerance of {tol}.")
    return out


def _conditions(points, joins, terms):
    return {"three_halves_rule_at_branch_points": all(r["ok"] for r in points),
            "three_halves_rule_at_cylinder_joins": all(r["ok"] for r in joins),
            "equal_terminal_electrotonic_distance": all(r["x_ok"] for r in terms["rows"]),
            "equal_terminal_electrotonic_distance_required": terms["equal_x_required"],
            "uniform_membrane": True,
            "like_ends": terms["like_ends"]}


def cylinder_curve(cyl_tree, n_points=51):
    """Steady-state soma→site voltage ratio along the equivalent cylinder, X from 0 to L.

    Solved by the engine's own tree code on the one-branch cylinder (current injected at the
    soma; Rall 1959's cylinder with the cylinder's end condition).

    Parameters
    ----------
    cyl_tree : Tree
        The one-branch cylinder, built from :func:`cylinder_scenario`.
    n_points : int, default 51
        Number of points, evenly spaced in X.

    Returns
    -------
    dict
        ``{"electrotonic_distance": [...], "soma_to_site": [...]}`` (``n_points`` each), the curve
        the page draws against the tree's own branches.
    """
    length_um = float(cyl_tree.length_um[0])
    y_um = np.linspace(0.0, length_um, n_points)
    t = point_terms(solve_tree(cyl_tree, np.array([0.0])), np.zeros(n_points, dtype=np.intp), y_um)
    with np.errstate(divide="ignore", under="ignore"):
        a = np.exp(t["down"][:, 0])
    return {"electrotonic_distance": [float(v) for v in y_um / float(cyl_tree.lambda_um[0])],
            "soma_to_site": [float(v) for v in a]}


def equivalent_cylinder(tree, scenario, sec, y_um, sol_dc=None):
    """The ``equivalent_cylinder`` block of the report (keys in DEVELOPERS.md; Rall 1962; 1964).

    Parameters
    ----------
    tree : Tree
        The full tree, from :func:`~somaward.tree.build_tree`.
    scenario : dict
        The validated scenario; ``equivalent_cylinder.tolerance`` (default 0.05) is read from it.
    sec : int
        Section of ``tree`` holding the synapse.
    y_um : float
        Distance of the synapse from that section's proximal end (µm).
    sol_dc : TreeSolution, optional
        The steady-state solution of ``tree`` (``solve_tree(tree, [0.0])``), if already computed.

    Returns
    -------
    dict
    """
    tol = float(scenario.get("equivalent_cylinder", {}).get("tolerance", DEFAULT_TOLERANCE))
    points, joins = branch_point_rows(tree, tol), cylinder_join_rows(tree, tol)
    terms = terminal_rows(tree, tol)
    cyl = cylinder_scenario(tree, scenario, terms)
    cyl_tree = build_tree(cyl["branches"], cyl["membrane"], cyl["soma"])
    cond = _conditions(points, joins, terms)
    deps = [abs(r["departure"]) for r in points + joins]
    spread = terms["x_max"] - terms["x_min"]
    relative_spread = spread / terms["electrotonic_length"] if terms["electrotonic_length"] > 0 else 0.0
    return {
        "tolerance": tol,
        "meets_conditions": all(v for k, v in cond.items() if k != "equal_terminal_electrotonic_distance_required"),
        "conditions": cond,
        "breaks": {"branch_points": [r["parent"] for r in points if not r["ok"]],
                   "cylinder_joins": sorted({r["branch"] for r in joins if not r["ok"]}),
                   "terminals": [r["branch"] for r in terms["rows"] if not r["ok"]]},
        "messages": _messages(points, joins, terms, tol),
        "branch_points": points, "cylinder_joins": joins, "terminals": terms["rows"],
        "max_rule_departure": max(deps) if deps else 0.0,
        "terminal_electrotonic_distance_min": terms["x_min"],
        "terminal_electrotonic_distance_max": terms["x_max"],
        "terminal_electrotonic_distance_spread": spread,
        "terminal_electrotonic_distance_relative_spread": relative_spread,
        "end_condition": terms["end"] if terms["like_ends"] else "mixed",
        "cylinder": {"diameter_um": cyl["diameter_um"], "electrotonic_length": cyl["electrotonic_length"],
                     "electrotonic_length_min": terms["x_min"], "electrotonic_length_max": terms["x_max"],
                     "lambda_um": cyl["lambda_um"], "length_um": cyl["length_um"],
                     "end": cyl["branches"][0]["end"],
                     "stems": [tree.branch_ids[b] for b in roots(tree.branch_parent)],
                     "length_rule": LENGTH_RULE, "taper_rule": TAPER_RULE,
                     "curve": cylinder_curve(cyl_tree)},
        "comparison": _comparison(tree, cyl_tree, sec, y_um, sol_dc),
    }


# ------------------------------------------------------------------ export hooks (text)
# Labels and units of every number come from somaward.quantities; only the sentences are here.

_BP = "equivalent_cylinder.branch_points[]"
_CJ = "equivalent_cylinder.cylinder_joins[]"
RULE_TABLE_BLOCKS = (
    ("branch_points", "Branch points: the 3/2 power rule d_[parent]^[3/2] = Σd_[child]^[3/2] (Rall 1962)",
     ("parent", "children", "parent_diameter_um", "child_diameters_um", "ratio", "departure", "ok")),
    ("cylinder_joins", "Diameter steps between the cylinders of a branch, each a branch point with one child",
     ("branch", "cylinder", "diameter_before_um", "diameter_after_um", "ratio", "departure", "ok")),
)


def rule_table_rows(report):
    """The 3/2-rule table for exports: a block of branch points, then a block of diameter steps.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve`.

    Returns
    -------
    list of (caption, columns, rows)
        ``caption`` in the label markup of :mod:`somaward.quantities`; ``columns`` the canonical
        quantity keys of the columns (``equivalent_cylinder.branch_points[].ratio`` …), whose labels
        and units head the table; ``rows`` the report's own values (unformatted), one list per
        branch point or diameter step. A step is named by its branch id and the number of the
        cylinder after it (counted from 1). Blocks without rows are left out.
    """
    eq = report["equivalent_cylinder"]
    prefix = {"branch_points": _BP, "cylinder_joins": _CJ}
    out = []
    for name, caption, cols in RULE_TABLE_BLOCKS:
        rows = [[r[c] for c in cols] for r in eq[name]]
        if rows:
            out.append((caption, [f"{prefix[name]}.{c}" for c in cols], rows))
    return out


def _plain(markup, rec="soma"):
    return _render(markup, "plain", rec)


def _lower_first(text):
    """Lower-case the first letter of a word ('Input resistance' → 'input resistance'), never of a symbol."""
    return text[:1].lower() + text[1:] if text[1:2].islower() else text


def _and(items, limit=6):
    """'a', 'a and b', 'a, b and c'; more than ``limit`` items end in 'and N more'."""
    items = [str(i) for i in items]
    if len(items) > limit:
        items = items[:limit - 1] + [f"{len(items) - limit + 1} more"]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _count(n, singular, plural=None):
    return f"{n} {singular if n == 1 else (plural or singular + 's')}"


def _span(values, digits=3):
    """'= 1.02' for one value (or equal values at this precision), else 'from 1.02 to 1.41'."""
    lo, hi = f"{min(values):.{digits}g}", f"{max(values):.{digits}g}"
    return f"= {lo}" if lo == hi else f"from {lo} to {hi}"


def _rule_clause(eq):
    points, joins = eq["branch_points"], eq["cylinder_joins"]
    rule = "the 3/2 power rule, " + _plain("d_[parent]^[3/2] = Σd_[child]^[3/2]") + ","
    if not points and not joins:
        return rule + " which had nothing to apply to, as the tree had no branch point and no diameter step"
    parts = []
    if points:
        bad = [r["parent"] for r in points if not r["ok"]]
        verdict = ("met" if len(points) == 1 else "met at each") if not bad else \
            f"not met at the end of {_and(bad)}"
        parts.append(f"at its {_count(len(points), 'branch point')} ({_label(f'{_BP}.ratio')} "
                     f"{_span([r['ratio'] for r in points])}; {verdict})")
    if joins:
        bad = [f"between cylinders {r['cylinder'] - 1} and {r['cylinder']} of {r['branch']}"
               for r in joins if not r["ok"]]
        verdict = ("met" if len(joins) == 1 else "met at each") if not bad else f"not met {_and(bad)}"
        each = "each taken" if len(joins) > 1 else "taken"
        parts.append(f"at its {_count(len(joins), 'diameter step')} between the cylinders of a branch, {each} "
                     f"as a branch point with one child ({_label(f'{_CJ}.ratio')} "
                     f"{_span([r['ratio'] for r in joins])}; {verdict})")
    tail = "" if points else ", the tree having no branch point"
    return f"{rule} {' and '.join(parts)}{tail}"


def _terminal_clause(eq):
    terms = eq["terminals"]
    if not eq["conditions"]["equal_terminal_electrotonic_distance_required"]:
        return "the same electrotonic distance X at every terminal end, which infinite ends do not need"
    if len(terms) == 1:
        return "the same electrotonic distance X at every terminal end (the tree had a single terminal)"
    bad = [r["branch"] for r in terms if not r["x_ok"]]
    verdict = "met" if not bad else f"not met at {_and(bad)}"
    return (f"the same electrotonic distance X at every terminal end (X from "
            f"{eq['terminal_electrotonic_distance_min']:.3g} to {eq['terminal_electrotonic_distance_max']:.3g}; "
            f"{verdict})")


def _ends_clause(eq):
    terms = eq["terminals"]
    if eq["conditions"]["like_ends"]:
        end = terms[0]["end"]
        if len(terms) == 1:
            return f"and like end conditions (a single {end} end)"
        if end == "load":
            return "and like end conditions (all loads, in proportion to d^3/2)"
        return f"and like end conditions (all {end})"
    common = next((r["end"] for r in terms if r["end_ok"]), None)
    odd = [f"the load at {r['branch']} is not in proportion to d^3/2" if r["end"] == common == "load"
           else f"{r['branch']} is {r['end']}" for r in terms if not r["end_ok"]]
    others = f", the others {common}" if common and any(r["end"] != common for r in terms) else ""
    return f"and like end conditions (not met: {_and(odd)}{others})"


def _error_clause(what, err):
    if err is None:
        return None
    pct = abs(100.0 * err)
    if pct < 0.005:
        return f"matched the {what} to within 0.01 %"
    verb = "overestimated" if err > 0 else "underestimated"
    return f"{verb} the {what} by {pct:.0f} %" if pct >= 10 else f"{verb} the {what} by {pct:.2g} %"


def methods_sentence(report):
    """The equivalent-cylinder part of the methods paragraph, in the words of :mod:`somaward.quantities`.

    A few sentences: the conditions tested (Rall 1962; 1964) with the tolerance, the verdict, and
    the cylinder's error against the full tree at 0 Hz.

    Parameters
    ----------
    report : dict
        A report from :func:`somaward.solve`.

    Returns
    -------
    str
    """
    label = _label
    eq = report["equivalent_cylinder"]
    rec = report.get("recording_site", "soma")
    cyl, cmp_ = eq["cylinder"], eq["comparison"]
    tested = (f"The tree was tested against the conditions for its reduction to an equivalent cylinder "
              f"(Rall 1962; Rall 1964), each within a relative tolerance of {100 * eq['tolerance']:g} %: "
              f"{_rule_clause(eq)}; {_terminal_clause(eq)}; {_ends_clause(eq)}.")
    verdict = f"The tree {'met' if eq['meets_conditions'] else 'did not meet'} these conditions."
    how_l = ("the largest terminal X, any length giving the same cylinder with infinite ends"
             if cyl["end"] == "infinite" else "the membrane-area-weighted mean of the terminal X")
    x = cmp_["electrotonic_distance"]
    clauses = [
        _error_clause(_lower_first(label("soma_input_resistance_Mohm", rec)),
                      cmp_["soma_input_resistance_Mohm"]["relative_error"]),
        _error_clause(_lower_first(label("transfer_resistance_Mohm", rec)),
                      cmp_["transfer_resistance_Mohm"]["relative_error"]),
        _error_clause(f"{_lower_first(label('attenuation.steady_state.soma_to_site', rec))}, at the synapse's "
                      f"X = {x:.3g}", cmp_["soma_to_site"]["relative_error"]),
    ]
    said = _and([c for c in clauses if c is not None], limit=10)
    if cmp_["site_beyond_cylinder"]:
        said += (f", and had no point at the synapse's X = {x:.3g}, which lies beyond its end, so it gives no "
                 f"transfer resistance or voltage ratio for the synapse")
    cylinder = (f"At steady state, the equivalent cylinder ({_plain('d_[eq] = (Σd_[stem]^[3/2])^[2/3]')} = "
                f"{cyl['diameter_um']:.3g} {_unit('equivalent_cylinder.cylinder.diameter_um')}, electrotonic length "
                f"L = {cyl['electrotonic_length']:.3g}, {how_l}) {said}; "
                f"it does not give the {_lower_first(label('site_input_resistance_Mohm', rec))} or the "
                f"{_lower_first(label('attenuation.steady_state.site_to_soma', rec))}, since a point on it stands "
                f"for input spread over every branch at the same X, and these were taken from the full tree.")
    return " ".join((tested, verdict, cylinder))
