"""The engine's one exception family.

Every error a user can cause is raised at the public entry (``solve``, the CLI) as a
:class:`ScenarioError` whose message is one line: the JSON path of the offending field, the rule
it breaks, and the value given, e.g. ``branches[2].diameter: must be > 0 µm, got -1``.
"""

__all__ = ["ScenarioError"]


class ScenarioError(ValueError):
    """A scenario that cannot be solved, with a one-line message naming the field.

    Parameters
    ----------
    path : str
        JSON path of the offending field (``""`` for the whole scenario).
    rule : str
        What is allowed, in words.
    """

    def __init__(self, path, rule):
        self.path = path
        self.rule = rule
        super().__init__(f"{path}: {rule}" if path else rule)
