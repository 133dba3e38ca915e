"""Unbranched runs of sections composed as one two-port each, for the passes of :mod:`somaward.tree`.

A *run* is a maximal chain of sections in which every section but the last has exactly one child
(a branch with a single child continues the run). Through one section of electrotonic length L
(κ = kL, t = tanh κ) the admittance seen at its proximal end is a linear-fractional (Möbius) map
of the load YL at its distal end (Rall 1959's recursion of input admittances):

    Yin = Y0·(YL + Y0·t)/(Y0 + YL·t) = (1·YL + Y0 t)/((t/Y0)·YL + 1),   matrix [[1, Y0 t], [t/Y0, 1]],

with t = −m/(2 + m), m = expm1(−2κ), so short sections keep full relative precision. The same map
carries the admittance Yup looking back towards the recording site across a section (its load is
then Yup at the section's proximal node). Möbius maps compose as the products of their 2×2
matrices, so the maps from a run's distal load to every section's input admittance (the up
pass), and from the Yup at a run's first section to every later one (the down pass), are suffix
and prefix products along the run. They are formed by pointer jumping (Wyllie 1979's list
ranking): ⌈log₂ n⌉ synchronous numpy steps for a run of n sections, over all runs at once. A
Möbius map is unchanged by a common factor of its matrix, so each product is divided by
|a| + |d| and nothing overflows, however long the run (its entries would grow like e^L). The
passes then walk the runs by branching depth only: one numpy step per level of branch points.

Units as in :mod:`somaward.tree`: admittances in µS, s in 1/ms.
"""

import numpy as np

from . import cable

__all__ = ["run_structure", "up_pass", "down_admittances"]


def _compose(ptr, a, b, c, d):
    """X_i ← X_i · X_ptr(i) (matrix product), ptr ← ptr(ptr), until every pointer ends (pointer jumping)."""
    ptr = ptr.copy()
    a, b, c, d = a.copy(), b.copy(), c.copy(), d.copy()
    while True:
        live = np.flatnonzero(ptr >= 0)
        if live.size == 0:
            return a, b, c, d
        q = ptr[live]
        a1, b1, c1, d1 = a[live], b[live], c[live], d[live]
        a2, b2, c2, d2 = a[q], b[q], c[q], d[q]
        na, nb = a1 * a2 + b1 * c2, a1 * b2 + b1 * d2
        nc, nd = c1 * a2 + d1 * c2, c1 * b2 + d1 * d2
        scale = 1.0 / (np.abs(na) + np.abs(nd))
        a[live], b[live], c[live], d[live] = na * scale, nb * scale, nc * scale, nd * scale
        ptr[live] = ptr[q]


def _follow(ptr):
    """The last element reached from each element along ``ptr`` (−1 ends), by pointer jumping."""
    r = np.where(ptr >= 0, ptr, np.arange(len(ptr)))
    while True:
        nr = r[r]
        if np.array_equal(nr, r):
            return r
        r = nr


def run_structure(local_parent, continues):
    """Runs of a set of sections given in parent-before-child order.

    Parameters
    ----------
    local_parent : ndarray of int
        Position of each element's parent in the set; −1 where it has none in the set.
    continues : ndarray of bool
        Whether each element continues its parent's run (its parent has it as the only child).

    Returns
    -------
    dict
        ``head`` and ``end``: first and last element of each element's run; ``next``: the element
        after it in its run (−1 at a run's end); ``is_head``; ``groups``: one (members, heads) pair
        of index arrays per branching level, from the recording site outwards.

    Examples
    --------
    A chain of three, then two children of its last element:

    >>> import numpy as np
    >>> r = run_structure(np.array([-1, 0, 1, 2, 2]), np.array([False, True, True, False, False]))
    >>> r["head"].tolist(), r["end"].tolist(), [g[0].tolist() for g in r["groups"]]
    ([0, 0, 0, 3, 4], [2, 2, 2, 3, 4], [[0, 1, 2], [3, 4]])
    """
    n = len(local_parent)
    prev = np.where(continues, local_parent, -1)
    nxt = np.full(n, -1, dtype=np.intp)
    nxt[prev[continues]] = np.flatnonzero(continues)
    head, end = _follow(prev), _follow(nxt)
    is_head = ~continues
    level = is_head.astype(np.intp)          # heads on the way from the recording site, minus one
    anc = local_parent.copy()
    while True:
        live = np.flatnonzero(anc >= 0)
        if live.size == 0:
            break
        level[live] += level[anc[live]]
        anc[live] = anc[anc[live]]
    level -= 1
    order = np.argsort(level, kind="stable")
    cuts = np.flatnonzero(np.diff(level[order])) + 1
    groups = [(g, g[is_head[g]]) for g in np.split(order, cuts)] if n else []
    return {"head": head, "end": end, "next": nxt, "is_head": is_head, "groups": groups}


def _section_maps(y0, m):
    """Matrix entries (a, b, c, d) of each section's admittance map YL ↦ Yin (module docstring)."""
    t = -m / (2.0 + m)
    one = np.ones_like(y0)
    return one, y0 * t, t / y0, one.copy()


def _children_counts(parent):
    return np.bincount(parent[parent >= 0], minlength=len(parent))


def up_pass(parent, loads, y0, m):
    """Leaves → root with composed runs: Γ of each distal load and Yin of each section.

    Parameters
    ----------
    parent : ndarray of int
        Parent section of each section (−1 at the recording site), parents before children.
    loads : (ndarray, ndarray)
        Terminal loads as (num, den), YL = num/den: num (N + 1, F) with 0 at internal nodes,
        den (N, 1) with 0 for a killed end (:func:`somaward.tree.solve_tree` builds them).
    y0 : ndarray, (N, F)
        Characteristic admittance of each section (µS).
    m : ndarray, (N, F)
        expm1(−2κ) of each section.

    Returns
    -------
    dict of ndarray
        ``gamma_distal``, ``one_plus_gamma_distal``, ``one_minus_gamma_distal``, ``yin_uS`` (N, F)
        and ``yload_uS`` (N + 1, F; row N the dendrites' load at the recording site), as
        :class:`somaward.tree.TreeSolution` names them.
    """
    num, den = loads
    n = len(parent)
    safe_parent = np.maximum(parent, 0)
    runs = run_structure(parent, (parent >= 0) & (_children_counts(parent)[safe_parent] == 1))
    a, b, c, d = _compose(runs["next"], *_section_maps(y0, m))     # run end's load ↦ Yin
    yin_run = np.empty_like(y0)
    parent_row = np.where(parent >= 0, parent, n)
    end = runs["end"]
    for members, heads in reversed(runs["groups"]):
        e = end[members]
        ne, de = num[e], den[e]
        yin_run[members] = (a[members] * ne + b[members] * de) / (c[members] * ne + d[members] * de)
        np.add.at(num, parent_row[heads], yin_run[heads])
    inner = np.flatnonzero(runs["next"] >= 0)
    num[inner] = yin_run[runs["next"][inner]]
    gam, opg, omg = cable.reflection(y0, num[:n], den)
    yin = cable.through_admittance(y0, gam, omg, opg, m)
    return {"gamma_distal": gam, "one_plus_gamma_distal": opg, "one_minus_gamma_distal": omg, "yin_uS": yin,
            "yload_uS": num}


def down_admittances(parent, sel, y0, m, up, y_root):
    """Root → leaves with composed runs: Yup, the admittance looking back towards the root.

    Yup of a section is everything except its own subtree, seen from its proximal node. At the
    first section of a run it is the node's total admittance minus the section's own Yin (as in
    the per-level pass); along the run it is the previous section's admittance map applied to
    that section's Yup.

    Parameters
    ----------
    parent : ndarray of int
        Parent section of each section (−1 at the recording site).
    sel : ndarray of int
        The sections wanted, parents before children: every section, or one path from the
        recording site outwards.
    y0 : ndarray, (N, F)
        Characteristic admittance of each section (µS).
    m : ndarray, (N, F)
        expm1(−2κ) of each section.
    up : dict
        :func:`up_pass`'s result.
    y_root : ndarray, (F,)
        Total admittance at the recording site (µS).

    Returns
    -------
    ndarray, (len(sel), F)
        Yup of each section of ``sel`` (µS).
    """
    yin, yload = up["yin_uS"], up["yload_uS"]
    n = len(parent)
    pos = np.full(n, -1, dtype=np.intp)
    pos[sel] = np.arange(len(sel))
    p = parent[sel]
    lp = np.where(p >= 0, pos[np.maximum(p, 0)], -1)
    continues = (lp >= 0) & (_children_counts(parent)[np.maximum(p, 0)] == 1)
    runs = run_structure(lp, continues)
    ps = sel[np.maximum(lp, 0)]                       # the parent's section (unused at heads)
    a, b, c, d = _section_maps(y0[ps], m[ps])        # Yup of the parent ↦ Yup of the element
    ptr = np.where(continues & continues[np.maximum(lp, 0)], lp, -1)
    a, b, c, d = _compose(ptr, a, b, c, d)          # Yup at the run's head ↦ Yup of the element
    yup = np.empty((len(sel), y0.shape[1]), dtype=y0.dtype)
    head = runs["head"]
    for members, heads in runs["groups"]:
        at_root = lp[heads] < 0
        base = np.empty((len(heads), y0.shape[1]), dtype=y0.dtype)
        base[at_root] = y_root[None, :]
        ph = lp[heads[~at_root]]
        if ph.size:
            sp = sel[ph]
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                g, op, om = cable.reflection(y0[sp], yup[ph])
                base[~at_root] = cable.through_admittance(y0[sp], g, om, op, m[sp]) + yload[sp]
        yup[heads] = base - yin[sel[heads]]
        inner = members[~runs["is_head"][members]]
        h = yup[head[inner]]
        yup[inner] = (a[inner] * h + b[inner]) / (c[inner] * h + d[inner])
    return yup
