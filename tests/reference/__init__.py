"""Independent reference computations used only by the tests (never by the engine).

``nodal`` solves passive dendritic trees by nodal analysis with exact cylinder two-ports in
mpmath (check S10 of docs/checks.md). Nothing here imports ``somaward``.
"""
