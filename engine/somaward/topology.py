"""The shape of a tree: children, the path to the root, where a point lies, and its X.

Every walk over a tree goes through this module, at two levels:

* the **branch table**, while a scenario is validated (:mod:`somaward.scenario`) and when the
  tree is built: ``parents`` is a sequence of parent indices, −1 for a branch that leaves the
  recording site (the soma, or the root node without one);
* the **sections** of a built :class:`~somaward.tree.Tree` (uniform cylinders in level order),
  for the report and the equivalent cylinder: ``tree.parent`` and ``tree.branch_parent`` are
  such sequences, and a point is (section, distance in µm from the section's proximal end).

Nothing here recurses, so a chain of 10⁵ branches is as safe as a bushy tree. The electrotonic
distance of a point is X = Σ ℓ_i/λ_i over the cylinders between it and the recording site
(Rall 1959; Rall 1977), dimensionless.

Examples
--------
A trunk (0) with two daughters (1, 2), and a tuft (3) on daughter 2:

>>> parents = [-1, 0, 0, 2]
>>> children(parents)
[[1, 2], [], [3], []]
>>> path_to_root(parents, 3)
[0, 2, 3]
>>> locate_on_chain([400.0, 300.0], 550.0)      # 550 µm along trunk then daughter: 150 µm into it
(1, 150.0)
"""

__all__ = ["children", "roots", "path_to_root", "find_loop", "locate_on_chain", "sections_of_branch",
           "section_path", "locate_point", "electrotonic_distance"]


def children(parents):
    """The children of every node, in index order.

    Parameters
    ----------
    parents : sequence of int
        Parent index of each node (branch or section); a negative value for a node that leaves
        the recording site.

    Returns
    -------
    list of list of int
        ``children(parents)[i]`` lists the nodes whose parent is ``i``, in increasing order.

    Examples
    --------
    >>> children([-1, 0, 0, 1])
    [[1, 2], [3], [], []]
    """
    kids = [[] for _ in range(len(parents))]
    for i, p in enumerate(parents):
        if p >= 0:
            kids[int(p)].append(i)
    return kids


def roots(parents):
    """The nodes that leave the recording site (the stems, for branches), in index order.

    Parameters
    ----------
    parents : sequence of int
        Parent index of each node; negative at the recording site.

    Returns
    -------
    list of int

    Examples
    --------
    >>> roots([-1, 0, -1, 2])
    [0, 2]
    """
    return [i for i, p in enumerate(parents) if p < 0]


def path_to_root(parents, node):
    """The nodes from the recording site out to ``node``, both ends included.

    Parameters
    ----------
    parents : sequence of int
        Parent index of each node; negative at the recording site. Must hold no loop
        (see :func:`find_loop`).
    node : int
        The node the path leads to.

    Returns
    -------
    list of int
        The first element leaves the recording site; the last is ``node``.

    Examples
    --------
    >>> path_to_root([-1, 0, 1, 0], 2)
    [0, 1, 2]
    """
    chain = []
    while node >= 0:
        chain.append(int(node))
        node = int(parents[node])
    return chain[::-1]


def find_loop(parents):
    """The first loop of parent links, or None when every node leads to the recording site.

    Nodes are followed from each one in index order; the loop is reported from the first node
    met twice round to itself.

    Parameters
    ----------
    parents : sequence of int
        Parent index of each node; negative at the recording site.

    Returns
    -------
    list of int or None
        The nodes of the loop in parent order, the first repeated at the end.

    Examples
    --------
    >>> find_loop([-1, 2, 3, 1])
    [1, 2, 3, 1]
    >>> find_loop([-1, 0, 1]) is None
    True
    """
    state = [0] * len(parents)          # 0 unseen, 1 on the current chain, 2 reaches the site
    for start in range(len(parents)):
        chain, i = [], start
        while i >= 0 and state[i] == 0:
            state[i] = 1
            chain.append(i)
            i = int(parents[i])
        if i >= 0 and state[i] == 1:
            return chain[chain.index(i):] + [i]
        for j in chain:
            state[j] = 2
    return None


def locate_on_chain(lengths_um, distance_um):
    """Which piece of a chain of consecutive pieces holds a point, and how far into it.

    The pieces (the branches of a path, or the cylinders of a branch) follow one another from
    the chain's start. A point at the joint between two pieces belongs to the nearer one (the
    first); a distance beyond the chain's end is placed at the end of the last piece, and a
    negative one at the start of the first.

    Parameters
    ----------
    lengths_um : sequence of float
        Length of each piece in order (µm); at least one.
    distance_um : float
        Distance of the point from the chain's start (µm).

    Returns
    -------
    k : int
        Index of the piece in ``lengths_um``.
    offset_um : float
        Distance of the point from that piece's start (µm), within [0, its length].

    Examples
    --------
    >>> locate_on_chain([50.0, 50.0], 50.0)
    (0, 50.0)
    >>> locate_on_chain([50.0, 50.0], 120.0)
    (1, 50.0)
    """
    start = 0.0
    last = len(lengths_um) - 1
    for k, length in enumerate(lengths_um):
        if distance_um <= start + length or k == last:
            return k, min(max(distance_um - start, 0.0), length)
        start += length
    raise ValueError("lengths_um: a chain needs at least one piece")


def sections_of_branch(tree, branch):
    """The sections (cylinders) of one branch of a built tree, proximal to distal.

    They are not contiguous in the tree's level order.

    Parameters
    ----------
    tree : Tree
        A tree from :func:`somaward.tree.build_tree`.
    branch : int
        Index of the branch in the branch table.

    Returns
    -------
    list of int
        Section indices of ``tree``.
    """
    first, last = tree.branch_sections[branch]
    chain = [last]
    while chain[-1] != first:
        chain.append(int(tree.parent[chain[-1]]))
    return chain[::-1]


def section_path(tree, section):
    """The sections from the recording site out to ``section`` (:func:`path_to_root` on sections).

    Parameters
    ----------
    tree : Tree
        A tree from :func:`somaward.tree.build_tree`.
    section : int
        Index of the section the path leads to.

    Returns
    -------
    list of int
    """
    return path_to_root(tree.parent, section)


def locate_point(tree, branch, distance_um):
    """The section holding a point given by branch and distance, and where in it the point lies.

    Parameters
    ----------
    tree : Tree
        A tree from :func:`somaward.tree.build_tree`.
    branch : int
        Index of the branch in the branch table.
    distance_um : float
        Distance of the point from the branch's proximal end (µm), as the scenario's
        ``synapse.distance``; clamped to the branch.

    Returns
    -------
    section : int
        Index of the section (cylinder) in ``tree``.
    y_um : float
        Distance of the point from that section's proximal end (µm).
    cylinder : int
        The section's number among its branch's cylinders, counted from 1 at the proximal end
        (the report's ``site.cylinder``).
    """
    idx = sections_of_branch(tree, branch)
    k, y_um = locate_on_chain([float(tree.length_um[i]) for i in idx], distance_um)
    return idx[k], float(y_um), k + 1


def electrotonic_distance(tree, section, y_um=None):
    """Electrotonic distance X of points from the recording site: X = Σ ℓ_i/λ_i (Rall 1959).

    X of the section's proximal end plus y/λ of the section; the sum runs over the cylinders
    on the path, each with its own space constant (a dimensionless length).

    Parameters
    ----------
    tree : Tree
        A tree from :func:`somaward.tree.build_tree`.
    section : int or array of int
        Section index of each point.
    y_um : float or array of float, optional
        Distance of each point from its section's proximal end (µm); None (default) for the
        section's distal end.

    Returns
    -------
    float or ndarray
        X (dimensionless), the shape of ``section``.
    """
    if y_um is None:
        return tree.electrotonic_start[section] + tree.electrotonic_length[section]
    return tree.electrotonic_start[section] + y_um / tree.lambda_um[section]
