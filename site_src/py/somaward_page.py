"""The page's door into the engine, run inside the Web Worker under Pyodide.

Requests and answers cross the worker boundary as JSON strings, never as proxies:
``call(fn, args_json)`` takes the name of an engine function and a JSON array of its
arguments and returns a pair ``(ok, payload)`` where payload is a JSON string: the
function's value when ok, else ``{"type", "message", "path", "plain"}``. For a ``ScenarioError``
``message`` is the engine's one-line message with the JSON path (the CLI's wording), ``path`` the
JSON path of the field the message is about and ``plain`` the engine's message for a form (the field's label and the rule in
plain words); the page shows ``plain`` beside the field ``path`` names. Anything else is a fault
of the page or the engine: ``message`` says what failed (for the console) and ``plain`` what a
person can do.
"""
from __future__ import annotations

import json
import traceback

import somaward
from somaward import export
from somaward.scenario import rename_old_keys


def paper(report: dict | str) -> dict:
    """Every text the page copies into a paper, made by ``somaward.export`` from one report:
    the results table and the 3/2-rule table in each format, the methods paragraph (the
    "## Methods" part of ``render(report, "md")``, as ``somaward report --format md`` prints it)
    and the stamp (engine version and scenario fingerprint) carried by every block."""
    if isinstance(report, str):
        # The report's own JSON text: a JavaScript round trip would turn 4.0 into 4 and change
        # the scenario fingerprint.
        report = json.loads(report)
    fmts = ("tsv", "md", "latex", "csv")
    methods = export.methods_text(report)        # render(report, "md") ends with exactly this text
    return {"table": {f: export.table(report, f) for f in fmts},
            "rule_table": {f: export.rule_table(report, f) for f in fmts},
            "methods": methods,
            "stamp": export.stamp(report)}


def upgrade(scenario: dict) -> dict:
    """A scenario saved by an older version with its keys renamed by the engine's own rule
    (``sections`` → ``cylinders``): ``{"scenario": ..., "warnings": [...]}``, the warnings naming
    the new keys. Nothing else is changed, no default filled in."""
    new, warnings = rename_old_keys(scenario)
    return {"scenario": new, "warnings": warnings}


# Engine functions the page may call (name → function); later sections add theirs here.
FUNCTIONS = {
    "solve": somaward.solve,
    "validate": somaward.validate,
    "upgrade": upgrade,
    "paper": paper,
}

FAULT = ("The calculator could not compute these inputs. Change a value and try again, or reload the page; "
         "if it keeps happening, save the scenario as JSON and report it with that file.")


def _error(kind: str, message: str, path: str | None = None, plain: str | None = None) -> tuple[bool, str]:
    return False, json.dumps({"type": kind, "message": message, "path": path, "plain": plain or FAULT})


def call(fn: str, args_json: str) -> tuple[bool, str]:
    """Run ``FUNCTIONS[fn](*args)``; return ``(ok, JSON string of value or error)``."""
    if fn not in FUNCTIONS:
        return _error("UnknownFunction", f"no engine function '{fn}' for the page")
    try:
        args = json.loads(args_json)
        value = FUNCTIONS[fn](*args)
        return True, json.dumps(value, allow_nan=False)
    except somaward.ScenarioError as exc:
        # The plain message is about plain_path (the missing key itself, where path is its object).
        return _error("ScenarioError", str(exc), getattr(exc, "plain_path", exc.path), exc.plain)
    except Exception as exc:  # noqa: BLE001 (anything else is a bug; say so, one line)
        last = traceback.format_exception_only(type(exc), exc)[-1].strip()
        return _error("InternalError", last)


def versions() -> str:
    """Versions of what the worker loaded, as a JSON string."""
    import numpy

    return json.dumps({"engine": getattr(somaward, "__version__", None),
                       "numpy": numpy.__version__})
