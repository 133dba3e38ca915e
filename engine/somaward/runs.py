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

__all__ = ["scan", "run_structure", "structure", "up_pass", "down_admittances", "ancestor_sums"]


def _matmul(x, y):
    """x·y of 2×2 matrices given as entry tuples (a, b, c, d), divided by |a| + |d| of the product."""
    a1, b1, c1, d1 = x
    a2, b2, c2, d2 = y
    a, d = a1 * a2 + b1 * c2, c1 * b2 + d1 * d2
    scale = 1.0 / (np.abs(a) + np.abs(d))
    return a * scale, (a1 * b2 + b1 * d2) * scale, (c1 * a2 + d1 * c2) * scale, d * scale


def _add(x, y):
    return tuple(u + v for u, v in zip(x, y, strict=True))


def _jump(ptr, values, combine):
    """X_i ← combine(X_i, X_ptr(i)), ptr ← ptr(ptr), until every pointer ends (pointer jumping)."""
    ptr = ptr.copy()
    values = [v.copy() for v in values]
    while True:
        live = np.flatnonzero(ptr >= 0)
        if live.size == 0:
            return values
        q = ptr[live]
        new = combine(tuple(v[live] for v in values), tuple(v[q] for v in values))
        for v, w in zip(values, new, strict=True):
            v[live] = w
        ptr[live] = ptr[q]


def scan(values, reset, combine, fill):
    """Inclusive segmented scan S_j = combine(x_j, S_{j−1}) along axis 0, restarting (S_j = x_j) at resets.

    Blocked so that the work is O(n) and the sequential numpy steps about 2√n at most: a scan
    inside blocks of B ≤ 64 elements (B steps over all blocks at once), the carry between blocks
    by pointer jumping (log₂ of the number of blocks), then one step applying each carry.
    ``combine`` must be associative (matrix products, sums).

    Parameters
    ----------
    values : tuple of ndarray
        The elements x_j as a tuple of arrays (n, ...) (the four entries of a matrix, or one sum).
    reset : ndarray of bool, (n,)
        Where the scan restarts; element 0 must be one.
    combine : callable
        ``combine(later, earlier)`` of two tuples like ``values``.
    fill : tuple of float
        The identity of ``combine``, entry by entry (pads the last block).

    Returns
    -------
    tuple of ndarray
        S_j, shaped as ``values``.

    Examples
    --------
    >>> import numpy as np
    >>> scan((np.arange(1.0, 8.0),), np.array([1, 0, 0, 1, 0, 0, 0], bool), _add, (0.0,))[0].tolist()
    [1.0, 3.0, 6.0, 4.0, 9.0, 15.0, 22.0]
    """
    n = len(reset)
    width = max(1, min(64, int(np.sqrt(n))))
    nb = -(-n // width)
    pad = nb * width - n

    def blocks(v, f):                                   # (width, nb, …): a column of blocks is contiguous
        if pad:
            v = np.concatenate([v, np.full((pad,) + v.shape[1:], f, dtype=v.dtype)])
        return np.ascontiguousarray(np.swapaxes(v.reshape((nb, width) + v.shape[1:]), 0, 1))

    s = [blocks(v, f) for v, f in zip(values, fill, strict=True)]
    r = blocks(np.asarray(reset, dtype=bool), True)
    for col in range(1, width):
        keep = ~r[col]
        if keep.any():
            new = combine(tuple(v[col] for v in s), tuple(v[col - 1] for v in s))
            for v, w in zip(s, new, strict=True):
                np.copyto(v[col], w, where=keep.reshape(keep.shape + (1,) * (w.ndim - 1)))
    seen = np.logical_or.accumulate(r, axis=0)          # a restart at or before j in its block
    if nb > 1:
        ptr = np.arange(nb - 1) - 1                       # block c's end takes block c−1's …
        ptr[seen[-1, :-1]] = -1                           # … unless it restarted inside
        carry = _jump(ptr, [v[-1, :-1] for v in s], combine)      # S at the end of blocks 0 … nb−2
        cols, rows = np.nonzero(~seen[:, 1:])
        if rows.size:
            new = combine(tuple(v[cols, rows + 1] for v in s), tuple(c[rows] for c in carry))
            for v, w in zip(s, new, strict=True):
                v[cols, rows + 1] = w
    return tuple(np.swapaxes(v, 0, 1).reshape((nb * width,) + v.shape[2:])[:n] for v in s)


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
        ``parent`` (``local_parent``); ``head`` and ``end``: first and last element of each
        element's run; ``next``: the element after it in its run (−1 at a run's end);
        ``is_head``; ``order``: the elements run by run, each from its head to its end;
        ``groups``: one (members, heads) pair of index arrays per branching level, from the
        recording site outwards.

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
    anc = np.where(is_head, local_parent, -1)
    anc = np.where(anc >= 0, head[np.maximum(anc, 0)], -1)     # from head to head: one step per run
    level_of_head = _jump(anc, [level], _add)[0] - 1
    level = level_of_head[head]
    order = np.lexsort((np.arange(n), head))
    by_level = np.argsort(level, kind="stable")
    cuts = np.flatnonzero(np.diff(level[by_level])) + 1
    groups = [(g, g[is_head[g]]) for g in np.split(by_level, cuts)] if n else []
    return {"parent": local_parent, "head": head, "end": end, "next": nxt, "is_head": is_head, "order": order,
            "groups": groups}


def structure(parent, sel=None):
    """:func:`run_structure` of every section (``sel`` None) or of one path from the recording site.

    Parameters
    ----------
    parent : ndarray of int
        Parent section of each section (−1 at the recording site), parents before children.
    sel : ndarray of int, optional
        Sections from the recording site outwards along one path; default every section.

    Returns
    -------
    dict
        :func:`run_structure`'s, plus ``sel`` (the section of each element).
    """
    n = len(parent)
    counts = np.bincount(parent[parent >= 0], minlength=n)
    sel = np.arange(n) if sel is None else np.asarray(sel, dtype=np.intp)
    pos = np.full(n, -1, dtype=np.intp)
    pos[sel] = np.arange(len(sel))
    p = parent[sel]
    lp = np.where(p >= 0, pos[np.maximum(p, 0)], -1)
    out = run_structure(lp, (lp >= 0) & (counts[np.maximum(p, 0)] == 1))
    out["sel"] = sel
    return out


def _section_maps(y0, m):
    """Matrix entries (a, b, c, d) of each section's admittance map YL ↦ Yin (module docstring)."""
    t = -m / (2.0 + m)
    one = np.ones_like(y0)
    return one, y0 * t, t / y0, one.copy()


_IDENTITY = (1.0, 0.0, 0.0, 1.0)


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
    runs = structure(parent)
    back = runs["order"][::-1]                        # each run from its end to its head
    at = np.empty(n, dtype=np.intp)                   # where each section sits in ``back``
    at[back] = np.arange(n)
    a, b, c, d = scan(_section_maps(y0[back], m[back]), runs["next"][back] < 0, _matmul, _IDENTITY)
    yin_run = np.empty_like(y0)                       # (run end's load ↦ Yin, in ``back``'s order)
    parent_row = np.where(parent >= 0, parent, n)
    end = runs["end"]
    for members, heads in reversed(runs["groups"]):
        e, k = end[members], at[members]
        ne, de = num[e], den[e]
        yin_run[members] = (a[k] * ne + b[k] * de) / (c[k] * ne + d[k] * de)
        np.add.at(num, parent_row[heads], yin_run[heads])
    inner = np.flatnonzero(runs["next"] >= 0)
    num[inner] = yin_run[runs["next"][inner]]
    gam, opg, omg = cable.reflection(y0, num[:n], den)
    yin = cable.through_admittance(y0, gam, omg, opg, m)
    return {"gamma_distal": gam, "one_plus_gamma_distal": opg, "one_minus_gamma_distal": omg, "yin_uS": yin,
            "yload_uS": num}


def down_admittances(runs, y0, m, up, y_root):
    """Root → leaves with composed runs: Yup, the admittance looking back towards the root.

    Yup of a section is everything except its own subtree, seen from its proximal node. At the
    first section of a run it is the node's total admittance minus the section's own Yin (as in
    the per-level pass); along the run it is the previous section's admittance map applied to
    that section's Yup.

    Parameters
    ----------
    runs : dict
        :func:`structure` of the sections wanted (every section, or one path).
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
        Yup of each section of ``runs["sel"]`` (µS).
    """
    yin, yload = up["yin_uS"], up["yload_uS"]
    sel, lp, is_head, head = runs["sel"], runs["parent"], runs["is_head"], runs["head"]
    order = runs["order"]
    at = np.empty(len(sel), dtype=np.intp)            # where each element sits in ``order``
    at[order] = np.arange(len(sel))
    ps = sel[np.maximum(lp, 0)][order]                # the parent's section (unused at heads)
    maps = _section_maps(y0[ps], m[ps])               # Yup of the parent ↦ Yup of the element
    at_head = is_head[order]
    maps = tuple(np.where(at_head[:, None], f, v) for v, f in zip(maps, _IDENTITY, strict=True))
    a, b, c, d = scan(maps, at_head, _matmul, _IDENTITY)   # Yup at the run's head ↦ Yup, in ``order``
    yup = np.empty((len(sel), y0.shape[1]), dtype=y0.dtype)
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
        inner = members[~is_head[members]]
        h, k = yup[head[inner]], at[inner]
        yup[inner] = (a[k] * h + b[k]) / (c[k] * h + d[k])
    return yup


def ancestor_sums(runs, *own):
    """Σ of each ``own`` over every element and its ancestors: within runs by :func:`scan`, then
    adding the sum at each run's parent, one branching level after another.

    Parameters
    ----------
    runs : dict
        :func:`structure` of the elements (every section, or one path).
    *own : ndarray, (len(sel), F)
        The terms of each element.

    Returns
    -------
    list of ndarray
        The sums, one per ``own``.
    """
    order, lp, head = runs["order"], runs["parent"], runs["head"]
    sums = scan(tuple(v[order] for v in own), runs["is_head"][order], _add, (0.0,) * len(own))
    out = [np.empty_like(v) for v in own]
    for o, v in zip(out, sums, strict=True):
        o[order] = v
    for members, _ in runs["groups"][1:]:               # level 0 starts at the recording site
        base = lp[head[members]]                          # the run's parent, one level nearer: final
        for o in out:
            o[members] += o[base]
    return out
