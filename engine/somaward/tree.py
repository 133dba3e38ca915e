"""Branched passive trees: the branch table as sections, and the O(N) passes over them.

A tree is stored as *sections* (uniform cylinders), numbered so that every level — the sections
at the same number of sections from the recording site — is one contiguous block and every
parent comes before its children. The passes treat each unbranched run of sections as one
composed two-port (:mod:`somaward.runs`): the sequential numpy steps follow the branching depth
plus about 2√(longest run), over all sections and frequencies at once, and the work stays O(N);
nothing recurses, so a chain of 10⁵ sections is as safe and nearly as fast per section as a
bushy tree. The per-level passes (one numpy step per level of sections) are kept as
``solve_tree(..., reference=True)``, the tests' reference.

For every Laplace variable s (1/ms) and section i the passes give (notation of :mod:`cable`):

* up (leaves → root): the distal load YL_i = Σ children's Yin (or the terminal condition), its
  reflection Γ_i and the section's input admittance Yin_i — Rall 1959's recursion of input
  admittances, in the bounded form of :mod:`cable`;
* down (root → leaves): D_i = ln(V_distal_i / V_root) for current injected at the root (the soma),
  the running sum of each section's ln V(L)/V(0); and Yup_i, the admittance of everything *except*
  the subtree of i seen from i's proximal node, carried across the section to give Γ'_i;
* U_i = ln(V_root / V_distal_i) for current injected at the distal node of i: the running sum of
  the proximal-direction voltage ratio of each section, whose load is Yup.

Values at a point then follow from the section's own terms (:mod:`sites`). The soma→site ratio
uses D and the site→soma ratio uses U: two genuinely different injections, so reciprocity
(Koch 1999 ch. 3) is a check, not an assumption.

Units inside: µm, ms, MΩ, µS, nF; s in 1/ms.
"""

from dataclasses import dataclass

import numpy as np

from . import cable, runs
from .membrane import input_resistance_infinite_Mohm, membrane_time_constant_ms, space_constant_um
from .topology import children as children_of, roots

__all__ = ["Tree", "TreeSolution", "build_tree", "solve_tree", "END_CODES"]

END_CODES = {"internal": 0, "sealed": 1, "killed": 2, "infinite": 3, "load": 4}


@dataclass(frozen=True)
class Tree:
    """Sections (uniform cylinders) of a tree in level order, with their cable constants.

    Arrays run over the N sections unless stated. Sections are numbered so that each level (the
    sections at the same number of sections from the recording site) is one contiguous block and
    every parent comes before its children. Walks over it go through :mod:`somaward.topology`.

    Attributes
    ----------
    branch_ids : tuple of str
        The branch table's ids, in its order (a branch index is a position here).
    branch_of : ndarray of int
        Branch index of each section.
    parent : ndarray of int
        Parent section of each section; −1 for a section leaving the recording site (the soma, or
        the root node without one).
    length_um, diameter_um : ndarray
        Length ℓ and diameter d of each section (µm).
    lambda_um : ndarray
        DC space constant λ of each section (µm).
    g_inf_uS : ndarray
        1/R∞ of each section (µS), the scale of its characteristic admittance.
    electrotonic_length : ndarray
        L = ℓ/λ of each section (dimensionless).
    start_um : ndarray
        Distance of the section's proximal end from its branch's proximal end (µm).
    path_start_um : ndarray
        Path distance of the section's proximal end from the recording site (µm).
    electrotonic_start : ndarray
        Electrotonic distance X of the section's proximal end from the recording site
        (dimensionless).
    end_code : ndarray of int
        :data:`END_CODES` of each section's distal end (0, "internal", except at terminals).
    end_g_uS, end_c_nF : ndarray
        Conductance (µS) and capacitance (nF) of a lumped load at a terminal; 0 elsewhere.
    levels : tuple of (int, int)
        (start, stop) section indices of each level, from the recording site outwards.
    branch_sections : tuple of (int, int)
        (first, last) section of each branch, proximal and distal.
    terminal_branch : ndarray of bool
        Whether each branch has no child branch.
    branch_parent : ndarray of int
        Parent branch index of each branch; −1 for a stem.
    tau_ms : float
        Membrane time constant τm = Rm·Cm of the dendrites (ms).
    soma_g_uS, soma_c_nF : float
        Conductance (µS) and capacitance (nF) of the soma's own membrane; 0 without a soma.
    has_soma : bool
        Whether the recording site is a soma (else the root node).
    """

    branch_ids: tuple
    branch_of: np.ndarray
    parent: np.ndarray
    length_um: np.ndarray
    diameter_um: np.ndarray
    lambda_um: np.ndarray
    g_inf_uS: np.ndarray
    electrotonic_length: np.ndarray
    start_um: np.ndarray
    path_start_um: np.ndarray
    electrotonic_start: np.ndarray
    end_code: np.ndarray
    end_g_uS: np.ndarray
    end_c_nF: np.ndarray
    levels: tuple
    branch_sections: tuple
    terminal_branch: np.ndarray
    branch_parent: np.ndarray
    tau_ms: float
    soma_g_uS: float
    soma_c_nF: float
    has_soma: bool

    @property
    def n_sections(self):
        return len(self.parent)


def _branch_order(branches):
    """Branch indices in breadth-first order from the roots, and each branch's parent index."""
    index = {b["id"]: i for i, b in enumerate(branches)}
    parent = np.array([-1 if b["parent"] is None else index[b["parent"]] for b in branches])
    children = children_of(parent)
    order = roots(parent)
    head = 0
    while head < len(order):
        order.extend(children[order[head]])
        head += 1
    return order, parent, children


def _sections_of(branch):
    if "cylinders" in branch:
        return [(float(s["length"]), float(s["diameter"])) for s in branch["cylinders"]]
    return [(float(branch["length"]), float(branch["diameter"]))]


def _end_terms(end):
    if isinstance(end, dict):
        return END_CODES["load"], float(end["G"]) * 1e-3, float(end["C"]) * 1e-3
    return END_CODES[end], 0.0, 0.0


def _section_rows(branches):
    """One row per section in breadth-first branch order, and each branch's (first, last) row.

    A row is (depth, branch, length, diameter, start, end code, G, C, parent row), where the
    parent row is −1 at the recording site; depth counts sections from the recording site.
    """
    order, bparent, children = _branch_order(branches)
    rows, first_last = [], [None] * len(branches)
    depth_end = np.zeros(len(branches), dtype=np.intp)   # level just after the branch
    for b in order:
        secs = _sections_of(branches[b])
        p = bparent[b]
        depth = 0 if p < 0 else depth_end[p]
        code, g, c = _end_terms(branches[b].get("end", "sealed")) if not children[b] else (0, 0.0, 0.0)
        start, first = 0.0, len(rows)
        for j, (length, diam) in enumerate(secs):
            last = j == len(secs) - 1
            parent_row = (first + j - 1) if j else (-1 if p < 0 else first_last[p][1])
            rows.append((depth + j, b, length, diam, start, code if last else 0, g if last else 0.0,
                         c if last else 0.0, parent_row))
            start += length
        first_last[b] = (first, len(rows) - 1)
        depth_end[b] = depth + len(secs)
    return rows, first_last, bparent, children


def build_tree(branches, membrane, soma=None):
    """The sections of a validated branch table, in level order, with their cable constants.

    Each branch is a chain of uniform cylinders (one, or its ``cylinders``); each becomes a
    section with λ = √(Rm·d/(4Ri)) and R∞ = (2/π)√(Rm·Ri)·d^(−3/2) (Rall 1959; Rall 1977). The
    membrane is passive and uniform over the dendrites; the soma is an isopotential sphere of
    area πD².

    Parameters
    ----------
    branches : list of dict
        Validated branches (``id``, ``parent``, ``length``/``diameter`` in µm or ``cylinders``,
        ``end`` at terminals), as :func:`somaward.scenario.validate` returns them.
    membrane : dict
        ``Rm`` (Ω·cm²), ``Ri`` (Ω·cm), ``Cm`` (µF/cm²), uniform over the tree.
    soma : dict or None, default None
        ``diameter`` (µm) and optional own ``Rm`` (Ω·cm²) of an isopotential spherical soma; None
        for no soma.

    Returns
    -------
    Tree

    Examples
    --------
    One sealed cylinder of the C2 cable, 500 µm long:

    >>> t = build_tree([{"id": "c", "parent": None, "length": 500.0, "diameter": 1.0, "end": "sealed"}],
    ...                {"Rm": 20000.0, "Ri": 200.0, "Cm": 1.0})
    >>> float(t.lambda_um[0]), float(t.electrotonic_length[0]), t.tau_ms
    (500.0, 1.0, 20.0)
    """
    rm_ohm_cm2, ri_ohm_cm = float(membrane["Rm"]), float(membrane["Ri"])
    cm_uF_cm2 = float(membrane["Cm"])
    rows, first_last, bparent, children = _section_rows(branches)
    cols = list(zip(*rows, strict=True))
    depth = np.array(cols[0], dtype=np.intp)
    perm = np.argsort(depth, kind="stable")          # level order, each branch's sections in order
    new_of_old = np.empty_like(perm)
    new_of_old[perm] = np.arange(len(perm))
    parent_old = np.array(cols[8], dtype=np.intp)[perm]
    parent = np.where(parent_old >= 0, new_of_old[np.maximum(parent_old, 0)], -1)
    col = lambda k, dt=float: np.array(cols[k], dtype=dt)[perm]  # noqa: E731
    length_um, diameter_um = col(2), col(3)
    lambda_um = space_constant_um(diameter_um, rm_ohm_cm2, ri_ohm_cm)
    electrotonic_length = length_um / lambda_um
    reach_um, reach_x = _ancestor_sums(parent, slice(None), length_um, electrotonic_length)
    soma_g_uS, soma_c_nF = _soma_terms(soma, rm_ohm_cm2, cm_uF_cm2)
    return Tree(
        branch_ids=tuple(b["id"] for b in branches),
        branch_of=col(1, np.intp), parent=parent, length_um=length_um, diameter_um=diameter_um,
        lambda_um=lambda_um, g_inf_uS=1.0 / input_resistance_infinite_Mohm(diameter_um, rm_ohm_cm2, ri_ohm_cm),
        electrotonic_length=electrotonic_length, start_um=col(4), path_start_um=reach_um - length_um,
        electrotonic_start=reach_x - electrotonic_length,
        end_code=col(5, np.intp), end_g_uS=col(6), end_c_nF=col(7), levels=_levels(depth[perm]),
        branch_sections=tuple((int(new_of_old[first]), int(new_of_old[last])) for first, last in first_last),
        terminal_branch=np.array([not ch for ch in children]), branch_parent=bparent,
        tau_ms=membrane_time_constant_ms(rm_ohm_cm2, cm_uF_cm2), soma_g_uS=soma_g_uS, soma_c_nF=soma_c_nF,
        has_soma=soma is not None,
    )


def _levels(depth_sorted):
    cuts = np.flatnonzero(np.diff(depth_sorted)) + 1
    bounds = np.concatenate(([0], cuts, [len(depth_sorted)]))
    return tuple((int(a), int(b)) for a, b in zip(bounds[:-1], bounds[1:], strict=True))


def _soma_terms(soma, rm_ohm_cm2, cm_uF_cm2):
    """Conductance (µS) and capacitance (nF) of a spherical soma of area πD²."""
    if soma is None:
        return 0.0, 0.0
    area_cm2 = np.pi * (float(soma["diameter"]) * 1e-4) ** 2
    soma_rm_ohm_cm2 = float(soma.get("Rm", rm_ohm_cm2))
    return area_cm2 / soma_rm_ohm_cm2 * 1e6, cm_uF_cm2 * area_cm2 * 1e3


@dataclass(frozen=True)
class TreeSolution:
    """Per-section terms of one tree at the Laplace variables ``s_per_ms`` (shape (F,)).

    Arrays over sections and Laplace variables are (N, F); notation of :mod:`somaward.cable`.

    Attributes
    ----------
    tree : Tree
        The tree solved.
    s_per_ms : ndarray, (F,)
        Laplace variables s (1/ms); s = iω for a frequency response, 0 for the steady state.
    propagation : ndarray, (F,)
        k = √(1 + sτm), the complex propagation factor per space constant (dimensionless).
    y0_uS : ndarray, (N, F)
        Characteristic admittance Y0 = k/R∞ of each section (µS).
    round_trip_m1 : ndarray, (N, F)
        e^{−2kL} − 1 of each section (by expm1; dimensionless): there and back along the section.
    gamma_distal, one_plus_gamma_distal, one_minus_gamma_distal : ndarray, (N, F)
        Γ, 1 + Γ and 1 − Γ of each section's distal load (dimensionless).
    yin_uS : ndarray, (N, F)
        Input admittance of each section with its subtree, seen at its proximal end (µS).
    yload_uS : ndarray, (N + 1, F)
        Distal load admittance of each section (µS); row N is the dendrites' load at the
        recording site.
    gamma_proximal, one_plus_gamma_proximal, one_minus_gamma_proximal : ndarray, (N, F)
        Γ', 1 + Γ', 1 − Γ' of the load Yup at each section's proximal end: everything but the
        section's own subtree (dimensionless).
    down_log : ndarray, (N, F)
        D = ln(V_distal/V_root) at each section's distal node for current injected at the root
        (real part in nepers, imaginary part the phase in rad).
    up_log : ndarray, (N, F)
        U = ln(V_root/V_distal) for current injected at each section's distal node (same units).
    y_root_uS : ndarray, (F,)
        Total admittance at the recording site (µS).
    y_soma_uS : ndarray, (F,)
        The soma's own admittance G + sC (µS; 0 without a soma).
    """

    tree: Tree
    s_per_ms: np.ndarray
    propagation: np.ndarray
    y0_uS: np.ndarray
    round_trip_m1: np.ndarray
    gamma_distal: np.ndarray
    one_plus_gamma_distal: np.ndarray
    one_minus_gamma_distal: np.ndarray
    yin_uS: np.ndarray
    yload_uS: np.ndarray
    gamma_proximal: np.ndarray
    one_plus_gamma_proximal: np.ndarray
    one_minus_gamma_proximal: np.ndarray
    down_log: np.ndarray
    up_log: np.ndarray
    y_root_uS: np.ndarray
    y_soma_uS: np.ndarray


def solve_tree(tree, s_per_ms, path=None, reference=False):
    """Run the up and down passes of ``tree`` at the Laplace variables ``s_per_ms``.

    Up pass (leaves → root): Rall 1959's recursion of input admittances in the bounded form of
    :mod:`somaward.cable`. Down pass (root → leaves): the admittance looking back towards the
    root, and the sums of log voltage ratios D (current at the root) and U (current at each
    distal node) along the ancestors (module docstring). Exact for passive uniform cylinders.
    Each unbranched run of sections is one composed two-port (:mod:`somaward.runs`), so the
    sequential numpy steps follow the branching depth plus log₂ of the longest run; vectorised
    over sections and ``s_per_ms``.

    Parameters
    ----------
    tree : Tree
        From :func:`build_tree`.
    s_per_ms : array_like
        Laplace variables s (1/ms): real (e.g. ``[0.0]``) for real arithmetic, ``s = iω`` for the
        frequency response (:func:`somaward.frequency.laplace_of_hz`).
    path : sequence of int, optional
        Section indices from the recording site outwards (e.g. to a synapse,
        :func:`somaward.topology.section_path`); the down pass then runs along them only, and only
        points on that path may be evaluated. Default: every section.
    reference : bool, default False
        Run the passes one level of sections at a time instead (one numpy step per level: slow
        on long chains; kept as the tests' reference for the composed passes).

    Returns
    -------
    TreeSolution
    """
    s = np.atleast_1d(np.asarray(s_per_ms))
    k = np.sqrt(1.0 + s * tree.tau_ms)
    y0 = tree.g_inf_uS[:, None] * k[None, :]
    kappa = tree.electrotonic_length[:, None] * k[None, :]
    m = np.expm1(-2.0 * kappa)
    if reference:
        up = _up_pass(tree, s, y0, m)
    else:
        up = runs.up_pass(tree.parent, _terminal_loads(tree, s, y0), y0, m)
    y_soma = (tree.soma_g_uS + s * tree.soma_c_nF) * np.ones_like(k)
    y_root = y_soma + up["yload_uS"][-1]
    if reference:
        levels = tree.levels if path is None else tuple((int(i), int(i) + 1) for i in path)
        down = _down_pass(tree, levels, y0, kappa, m, up, y_root)
    else:
        along = runs.structure(tree.parent, path)
        yup = runs.down_admittances(along, y0, m, up, y_root)
        down = _down_logs(along, path is None, y0, kappa, m, up, yup)
    return TreeSolution(tree=tree, s_per_ms=s, propagation=k, y0_uS=y0, round_trip_m1=m, y_root_uS=y_root,
                        y_soma_uS=y_soma, **up, **down)


def _terminal_loads(tree, s, y0):
    """Initial distal loads as (num, den): 0 sealed, killed (1, 0), y0 infinite, G + sC lumped."""
    n, n_s = y0.shape
    num = np.zeros((n + 1, n_s), dtype=y0.dtype)
    den = np.ones((n, 1))
    code = tree.end_code
    killed, inf, load = code == END_CODES["killed"], code == END_CODES["infinite"], code == END_CODES["load"]
    num[:n][killed] = 1.0
    den[killed] = 0.0
    num[:n][inf] = y0[inf]
    num[:n][load] = tree.end_g_uS[load][:, None] + tree.end_c_nF[load][:, None] * s[None, :]
    return num, den


def _up_pass(tree, s, y0, m):
    """Leaves → root: Γ of each distal load and Yin of each section (:mod:`cable`'s formulas)."""
    num, den = _terminal_loads(tree, s, y0)      # distal loads as num/den (den = 0: killed)
    gam, opg, omg, yin = (np.empty_like(y0) for _ in range(4))
    parent_row = np.where(tree.parent >= 0, tree.parent, tree.n_sections)
    for lo, hi in reversed(tree.levels):
        g, p, q = cable.reflection(y0[lo:hi], num[lo:hi], den[lo:hi])
        gam[lo:hi], opg[lo:hi], omg[lo:hi] = g, p, q
        yin[lo:hi] = cable.through_admittance(y0[lo:hi], g, q, p, m[lo:hi])
        np.add.at(num, parent_row[lo:hi], yin[lo:hi])
    return {"gamma_distal": gam, "one_plus_gamma_distal": opg, "one_minus_gamma_distal": omg, "yin_uS": yin,
            "yload_uS": num}


def _down_pass(tree, levels, y0, kappa, m, up, y_root):
    """Yup recursion level by level, then the ln-ratio sums D and U along the ancestors."""
    gam, opg, yin, yload = up["gamma_distal"], up["one_plus_gamma_distal"], up["yin_uS"], up["yload_uS"]
    gup, opu, omu = (np.empty_like(y0) for _ in range(3))
    node_y = np.empty_like(y0)        # total admittance at each section's distal node
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for lo, hi in levels:
            p = tree.parent[lo:hi]
            if p[0] < 0:                  # sections leaving the recording site (level 0 only)
                y_prox = y_root[None, :] - yin[lo:hi]
            else:
                y_prox = node_y[p] - yin[lo:hi]
            g, op, om = cable.reflection(y0[lo:hi], y_prox)
            gup[lo:hi], opu[lo:hi], omu[lo:hi] = g, op, om
            node_y[lo:hi] = cable.through_admittance(y0[lo:hi], g, om, op, m[lo:hi]) + yload[lo:hi]
    sel = np.concatenate([np.arange(lo, hi) for lo, hi in levels]) if levels is not tree.levels else slice(None)
    zero = np.zeros_like(m[sel])
    own_d = cable.log_voltage_ratio(kappa[sel], gam[sel], opg[sel], zero, m[sel])
    own_u = cable.log_voltage_ratio(kappa[sel], gup[sel], opu[sel], zero, m[sel])
    down_log, up_log = np.empty_like(y0), np.empty_like(y0)
    down_log[sel], up_log[sel] = _ancestor_sums(tree.parent, sel, own_d, own_u)
    return {"gamma_proximal": gup, "one_plus_gamma_proximal": opu, "one_minus_gamma_proximal": omu,
            "down_log": down_log, "up_log": up_log}


def _down_logs(along, whole, y0, kappa, m, up, yup):
    """Γ' of the loads Yup along ``along`` (:func:`runs.structure`), then the ln-ratio sums D and U."""
    sel = along["sel"]
    gam, opg = up["gamma_distal"], up["one_plus_gamma_distal"]
    gup, opu, omu = (np.empty_like(y0) for _ in range(3))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        gup[sel], opu[sel], omu[sel] = cable.reflection(y0[sel], yup)
    rows = slice(None) if whole else sel
    zero = np.zeros_like(m[rows])
    own_d = cable.log_voltage_ratio(kappa[rows], gam[rows], opg[rows], zero, m[rows])
    own_u = cable.log_voltage_ratio(kappa[rows], gup[rows], opu[rows], zero, m[rows])
    down_log, up_log = np.empty_like(y0), np.empty_like(y0)
    down_log[rows], up_log[rows] = runs.ancestor_sums(along, own_d, own_u)
    return {"gamma_proximal": gup, "one_plus_gamma_proximal": opu, "one_minus_gamma_proximal": omu,
            "down_log": down_log, "up_log": up_log}


def _ancestor_sums(parent, sel, *own):
    """Σ of ``own`` over each section and all its ancestors, by pointer jumping (O(log depth) steps).

    ``sel`` is every section (slice) or one root-to-site path in order (index array).
    """
    if isinstance(sel, slice):
        anc = parent.copy()
        acc = [o.copy() for o in own]
    else:                                   # a path: each element's parent is the one before it
        anc = np.arange(len(sel)) - 1
        acc = [o.copy() for o in own]
    while True:
        live = np.flatnonzero(anc >= 0)
        if live.size == 0:
            return acc
        a = anc[live]
        for x in acc:
            x[live] += x[a]
        anc[live] = anc[a]
