"""The scenario: structural check against the published schema, then the rules a schema cannot
state (ids, parents, cycles, where the synapse may sit), and the defaults filled in.

``validate(scenario)`` returns a new dict that validates again unchanged; every error is a
:class:`~somaward.errors.ScenarioError` with one line naming the JSON path.
"""

import math

from .errors import ScenarioError
from .schema_check import check, check_depth, describe, did_you_mean, load_schema
from .topology import children as children_of, find_loop, locate_on_chain, path_to_root

__all__ = ["validate", "default_frequencies_hz", "load_schema", "MAX_MAP_POINTS", "locate_synapse",
           "rename_old_keys"]

MAX_MAP_POINTS = 2_000_000
_REL_TOL = 1e-12


def default_frequencies_hz():
    """0 Hz and 10 log-spaced values per decade from 0.1 Hz to 10 kHz, to 3 significant digits."""
    values = [0.0]
    for j in range(-10, 41):
        freq_hz = 10.0 ** (j / 10.0)
        values.append(float(f"{freq_hz:.3g}"))
    return values


def rename_old_keys(scenario):
    """Rewrite keys that older files, links and autosaves used, before validation.

    A branch's chain of uniform cylinders was once the key ``sections``; it is now ``cylinders``
    (``sections`` means a whole unbranched cable in widely used simulation software).

    Parameters
    ----------
    scenario : dict or any
        A scenario as read from JSON; anything else is returned as it is.

    Returns
    -------
    scenario : dict
        The scenario itself when nothing was renamed, else a shallow copy with renamed keys.
    warnings : list of str
        One line naming the new key, when anything was renamed.
    """
    branches = scenario.get("branches") if isinstance(scenario, dict) else None
    if not isinstance(branches, list):
        return scenario, []
    renamed, new = [], []
    for i, b in enumerate(branches):
        if isinstance(b, dict) and "sections" in b and "cylinders" not in b:
            b = {("cylinders" if k == "sections" else k): v for k, v in b.items()}
            renamed.append(f"branch {describe(b['id'])}" if isinstance(b.get("id"), str) else f"branch {i + 1}")
        new.append(b)
    if not renamed:
        return scenario, []
    more = f" and {len(renamed) - 3} more" if len(renamed) > 3 else ""
    warning = (f"The old key 'sections' of {', '.join(renamed[:3])}{more} was read as 'cylinders', its new "
               "name (a branch is a chain of uniform cylinders); save the scenario again to update the file.")
    return {**scenario, "branches": new}, [warning]


def validate(scenario):
    """Check a scenario and return it with every default filled in.

    The structure is checked against the published schema (:mod:`somaward.schema_check`), then
    the rules it cannot state: unique ids, parents that exist, no loop of parents, end conditions
    on terminals only, the synapse inside its branch or path and not on a killed end, and a map
    spacing that keeps the map under :data:`MAX_MAP_POINTS`. Old key names (see
    :func:`rename_old_keys`) are accepted. The result validates again unchanged.

    Parameters
    ----------
    scenario : dict
        The scenario as read from JSON (units: µm, ms, pA, nS, pF, Hz; Rm Ω·cm², Ri Ω·cm,
        Cm µF/cm²); not modified.

    Returns
    -------
    dict
        A new scenario, keys in the schema's order, every default filled in.

    Raises
    ------
    ScenarioError
        For the first rule broken, naming its JSON path.

    Examples
    --------
    >>> sc = validate({"membrane": {"Rm": 20000, "Ri": 200},
    ...                "branches": [{"id": "c", "parent": None, "length": 500, "diameter": 1}],
    ...                "synapse": {"branch": "c", "distance": 250}})
    >>> sc["membrane"]["Cm"], sc["branches"][0]["end"], sc["frequencies_hz"][:3]
    (1.0, 'sealed', [0.0, 0.1, 0.126])
    """
    check_depth(scenario)                       # before anything recursive
    out = check(rename_old_keys(scenario)[0])
    branches = out["branches"]
    index = _check_ids(branches)
    children = _check_parents(branches, index)
    _fill_ends(branches, children)
    if out.get("soma") is not None:
        out["soma"].setdefault("Rm", out["membrane"]["Rm"])
    if "frequencies_hz" not in out:
        out["frequencies_hz"] = default_frequencies_hz()
    _check_synapse(out["synapse"], branches, index, children)
    _check_map_points(branches, out["map_spacing_um"])
    return _ordered(out)


def _ordered(out):
    """Keys in a stable order: the schema's, so that exports and permalinks are reproducible."""
    order = ["title", "notes", "membrane", "soma", "branches", "synapse",
             "frequencies_hz", "map_spacing_um", "map_frequency_hz", "equivalent_cylinder"]
    return {k: out[k] for k in order if k in out}


def branch_length_um(branch):
    if "cylinders" in branch:
        return math.fsum(s["length"] for s in branch["cylinders"])
    return branch["length"]


def _check_ids(branches):
    index = {}
    for i, b in enumerate(branches):
        if b["id"] in index:
            j = index[b["id"]]
            raise ScenarioError(f"branches[{i}].id", f"duplicate id {b['id']!r} (also branches[{j}])",
                                f"{b['id']!r} is already the id of branch {j + 1}")
        index[b["id"]] = i
    return index


def _parent_indices(branches, index):
    """Each branch's parent as an index into ``branches`` (−1 for a branch leaving the soma)."""
    return [-1 if b["parent"] is None else index[b["parent"]] for b in branches]


def _check_parents(branches, index):
    """Every parent names another branch and every branch leads to the soma; the children."""
    for i, b in enumerate(branches):
        p = b["parent"]
        if p is None:
            continue
        if p not in index:
            raise ScenarioError(f"branches[{i}].parent", f"no branch has id {describe(p, 80)}" + did_you_mean(p, index)
                                + " (use null for a branch leaving the soma)")
        if p == b["id"]:
            raise ScenarioError(f"branches[{i}].parent", f"a branch cannot be its own parent ({describe(p, 80)})")
    parents = _parent_indices(branches, index)
    loop = find_loop(parents)
    if loop is not None:
        names = " → ".join(_id_words(branches[j]["id"]) for j in loop[:6])
        names += " → …" if len(loop) > 6 else ""
        raise ScenarioError(f"branches[{loop[0]}].parent", f"the parent chain loops back on itself ({names}); "
                            "every branch must lead to the soma")
    return children_of(parents)


def _id_words(bid):
    """A branch id inside a message: bare when it reads unambiguously on one line, else quoted."""
    if bid.isprintable() and len(bid) <= 60 and not any(c in bid for c in " →'\"()"):
        return bid
    return describe(bid, 60)


def _fill_ends(branches, children):
    for i, b in enumerate(branches):
        if children[i]:
            if "end" in b:
                kids = ", ".join(repr(branches[c]["id"]) for c in children[i][:3])
                raise ScenarioError(f"branches[{i}].end", f"only terminal branches take an end condition; "
                                    f"{b['id']!r} has child branches ({kids})")
        else:
            b.setdefault("end", "sealed")


def _check_synapse(syn, branches, index, children):
    if "branch" in syn:
        if syn["branch"] not in index:
            raise ScenarioError("synapse.branch", f"no branch has id {describe(syn['branch'], 80)}"
                                + did_you_mean(syn["branch"], index))
        i, distance_um, field = index[syn["branch"]], syn["distance"], "synapse.distance"
        length_um = branch_length_um(branches[i])
        if distance_um > length_um * (1 + _REL_TOL):
            raise ScenarioError(field, f"must be ≤ {length_um:g} µm (the length of branch "
                                f"{describe(syn['branch'], 80)}), got {describe(distance_um)}")
    else:
        if syn["path"] not in index:
            raise ScenarioError("synapse.path", f"no branch has id {describe(syn['path'], 80)}"
                                + did_you_mean(syn["path"], index))
        i = index[syn["path"]]
        if children[i]:
            raise ScenarioError("synapse.path", f"must name a terminal branch; {describe(syn['path'], 80)} has "
                                "child branches")
        i, distance_um, field = _on_path(syn, branches, index)
        length_um = branch_length_um(branches[i])
    at_end = not children[i] and distance_um >= length_um * (1 - _REL_TOL)
    if at_end and branches[i].get("end") == "killed":
        raise ScenarioError(field, f"the synapse would sit on the killed end of {branches[i]['id']!r}, where V is "
                            "held at 0; place it inside the branch")
    cur = syn.get("current", {})
    if cur.get("shape") == "dual_exponential" and not cur["tau_decay"] > cur["tau_rise"]:
        raise ScenarioError("synapse.current.tau_decay", f"must be > tau_rise ({cur['tau_rise']:g} ms), "
                            f"got {describe(cur['tau_decay'])}")


def _on_path(syn, branches, index):
    chain = path_to_root(_parent_indices(branches, index), index[syn["path"]])
    path_length_um = math.fsum(branch_length_um(branches[i]) for i in chain)
    if syn["path_distance"] > path_length_um * (1 + _REL_TOL):
        raise ScenarioError("synapse.path_distance", f"must be ≤ {path_length_um:g} µm (the path length from the "
                            f"soma to the end of {describe(syn['path'], 80)}), got {describe(syn['path_distance'])}")
    i, distance_um = locate_synapse(syn, branches, index)
    return i, distance_um, "synapse.path_distance"


def locate_synapse(syn, branches, index):
    """Where a validated synapse sits: its branch and its distance from the branch's proximal end.

    A synapse given by ``path`` (a terminal branch id) and ``path_distance`` (µm from the soma) is
    placed on the branch of that path holding the distance (:func:`somaward.topology.locate_on_chain`;
    a point at a branch point belongs to the parent); one given by ``branch`` and ``distance`` is
    clamped to its branch.

    Parameters
    ----------
    syn : dict
        The validated scenario's ``synapse``.
    branches : list of dict
        The validated scenario's ``branches``.
    index : dict
        Branch id → position in ``branches``.

    Returns
    -------
    branch : int
        Index of the branch in ``branches``.
    distance_um : float
        Distance of the synapse from the branch's proximal end (µm).
    """
    if "branch" in syn:
        i = index[syn["branch"]]
        return i, min(float(syn["distance"]), branch_length_um(branches[i]))
    chain = path_to_root(_parent_indices(branches, index), index[syn["path"]])
    k, distance_um = locate_on_chain([branch_length_um(branches[i]) for i in chain], syn["path_distance"])
    return chain[k], distance_um


def _check_map_points(branches, spacing_um):
    points = 0.0
    for b in branches:
        for s in b.get("cylinders", [b]):
            pieces = s["length"] / spacing_um             # inf for a subnormal spacing: no ceil of it
            points += (math.ceil(pieces) + 1) if pieces <= MAX_MAP_POINTS else pieces
            if points > MAX_MAP_POINTS:
                raise ScenarioError("map_spacing_um", f"too fine for this tree: more than {MAX_MAP_POINTS:,} map "
                                    f"points; use a larger spacing, got {describe(spacing_um)} µm")
