"""The engine's one exception family.

Every error a user can cause is raised at the public entry (``solve``, the CLI) as a
:class:`ScenarioError` whose message is one line: the JSON path of the offending field, the rule
it breaks, and the value given, e.g. ``branches[2].diameter: must be > 0 µm, got -1``.

An :class:`InternalError` is the engine's own fault, never the user's: a report that would hold
a NaN or an infinity. It is one line naming the report key and the scenario's fingerprint, so
the case can be reproduced, and it is raised instead of returning the number.
"""

__all__ = ["ScenarioError", "InternalError"]


class ScenarioError(ValueError):
    """A scenario that cannot be solved, with a one-line message naming the field.

    Parameters
    ----------
    path : str
        JSON path of the offending field (``""`` for the whole scenario).
    rule : str
        What is allowed, in words.
    plain_rule : str, optional
        The same rule in a form's words ("enter a number in Ω·cm"); defaults to ``rule``.
    plain_path : str, optional
        The field the plain message is about, when it is not ``path`` (a missing key).

    Attributes
    ----------
    plain : str
        The message for a person at a form: the field's label from the scenario schema, then
        the plain rule, e.g. ``Axial resistivity R_i: enter a number in Ω·cm``.
    """

    def __init__(self, path, rule, plain_rule=None, plain_path=None):
        self.path = path
        self.rule = rule
        self.plain_rule = plain_rule or rule
        self.plain_path = path if plain_path is None else plain_path
        super().__init__(f"{path}: {rule}" if path else rule)

    @property
    def plain(self):
        from .quantities import input_label    # the schema's labels; imported late (no cycle)
        name = input_label(self.plain_path)
        return f"{name}: {self.plain_rule}" if name else self.plain_rule


class InternalError(RuntimeError):
    """A bug in the engine found by its last guard (e.g. a NaN or inf in a report); one line.

    Parameters
    ----------
    where : str
        What was wrong and where, e.g. ``a NaN at frequency_response.site_to_soma.phase_deg[3]``.
    fingerprint : str
        The fingerprint of the solved scenario (``report["stamp"]["fingerprint"]``).
    """

    def __init__(self, where, fingerprint):
        self.where = where
        self.fingerprint = fingerprint
        super().__init__(f"internal error: the report would hold {where}; this is a bug in the engine, "
                         f"please report it with the scenario (fingerprint {fingerprint})")
