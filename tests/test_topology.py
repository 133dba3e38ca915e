"""The one topology interface (engine/somaward/topology.py): children, paths, loops, locating a
point and its electrotonic distance. Bookkeeping, not physics (common practice, no source),
except X = Σ ℓ_i/λ_i (Rall 1959), checked against λ computed here from λ = √(Rm·d/(4Ri))
(Rall 1977)."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from somaward import topology, validate
from somaward.tree import build_tree


@st.composite
def parent_lists(draw, max_nodes=30):
    """A forest: every node's parent has a smaller index (−1 for a root)."""
    n = draw(st.integers(1, max_nodes))
    return [-1] + [draw(st.integers(-1, i - 1)) for i in range(1, n)]


@settings(max_examples=200, deadline=None)
@given(parent_lists())
def test_children_paths_and_roots_agree(parents):
    kids = topology.children(parents)
    assert sorted(c for cs in kids for c in cs) == [i for i, p in enumerate(parents) if p >= 0]
    for node in range(len(parents)):
        path = topology.path_to_root(parents, node)
        assert path[-1] == node and path[0] in topology.roots(parents)
        assert all(b in kids[a] for a, b in zip(path, path[1:], strict=False))
    assert topology.find_loop(parents) is None


def test_find_loop_names_the_loop_from_its_first_node():
    assert topology.find_loop([-1, 3, 1, 2]) == [1, 3, 2, 1]
    assert topology.find_loop([1, 0]) == [0, 1, 0]
    assert topology.find_loop([0]) == [0, 0]


@pytest.mark.parametrize("distance_um, expected", [
    (-5.0, (0, 0.0)), (0.0, (0, 0.0)), (30.0, (0, 30.0)), (50.0, (0, 50.0)),   # a joint belongs to the first
    (50.5, (1, 0.5)), (100.0, (1, 50.0)), (130.0, (2, 30.0)), (999.0, (2, 30.0)),
])
def test_locate_on_chain(distance_um, expected):
    k, offset = topology.locate_on_chain([50.0, 50.0, 30.0], distance_um)
    assert (k, offset) == pytest.approx(expected)


def test_locate_on_chain_needs_a_piece():
    with pytest.raises(ValueError, match="at least one piece"):
        topology.locate_on_chain([], 1.0)


def test_locate_point_and_electrotonic_distance_on_a_tapered_branch():
    """A trunk of 3 cylinders, then a daughter: the point 260 µm along the trunk is 10 µm into its
    third cylinder, and its X is Σ ℓ/λ over the cylinders before it plus 10/λ₃ (Rall 1959)."""
    sc = validate({"membrane": {"Rm": 20000, "Ri": 200, "Cm": 1},
                   "branches": [{"id": "trunk", "parent": None,
                                 "cylinders": [{"length": 100, "diameter": 4}, {"length": 150, "diameter": 2},
                                               {"length": 80, "diameter": 1}]},
                                {"id": "tip", "parent": "trunk", "length": 200, "diameter": 0.5}],
                   "synapse": {"branch": "tip", "distance": 10}})
    tree = build_tree(sc["branches"], sc["membrane"], sc.get("soma"))
    lam = [math.sqrt(20000 * d * 1e-4 / (4 * 200)) * 1e4 for d in (4, 2, 1, 0.5)]    # µm
    sec, y_um, cylinder = topology.locate_point(tree, 0, 260.0)
    assert (y_um, cylinder) == (10.0, 3)
    assert topology.sections_of_branch(tree, 0)[2] == sec
    x = 100 / lam[0] + 150 / lam[1] + 10 / lam[2]
    assert float(topology.electrotonic_distance(tree, sec, y_um)) == pytest.approx(x, rel=1e-12)
    tip = topology.sections_of_branch(tree, 1)[0]
    assert topology.section_path(tree, tip) == topology.sections_of_branch(tree, 0) + [tip]
    x_tip_end = 100 / lam[0] + 150 / lam[1] + 80 / lam[2] + 200 / lam[3]
    assert float(topology.electrotonic_distance(tree, tip)) == pytest.approx(x_tip_end, rel=1e-12)
