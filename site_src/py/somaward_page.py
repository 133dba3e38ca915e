"""The page's door into the engine, run inside the Web Worker under Pyodide.

Requests and answers cross the worker boundary as JSON strings, never as proxies:
``call(fn, args_json)`` takes the name of an engine function and a JSON array of its
arguments and returns a pair ``(ok, payload)`` where payload is a JSON string: the
function's value when ok, else ``{"type", "message", "path", "plain"}``, each text in it one line.
For a ``ScenarioError`` ``message`` is the engine's one-line message with the JSON path (the CLI's
wording), ``path`` the JSON path of the field the message is about and ``plain`` the engine's
message for a form (the field's label and the rule in plain words); the page shows ``plain``
beside the field ``path`` names. An input the page does not take (``read_input``: JSON it cannot
read, a link that holds no input) is ``{"type": "Refused", ...}``, one with too many branches for
its table ``{"type": "TooLarge", ...}``, with ``plain`` saying why. Anything else is a fault of
the page or the engine: an ``InternalError`` (the engine's last guard: a report that would hold a
NaN or an infinity) gets a ``plain`` sentence asking the person to report it with the scenario's
fingerprint, any other exception the sentence ``FAULT``; ``message`` then says what failed, on one
line, for the console.
"""
from __future__ import annotations

import json

import somaward
from somaward import export, jsonin
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


class Refused(Exception):
    """An input the page does not take, for a reason of the page's own; ``plain`` says it in words.
    ``kind``: the error type the page gets ("Refused", or "TooLarge" for a cell too large for
    the page's branch table, whose link the page offers to save as a file)."""

    def __init__(self, plain: str, kind: str = "Refused"):
        super().__init__(plain)
        self.plain = plain
        self.kind = kind


def _as_place(exc: jsonin.JSONInputError, name: str, kind: str) -> str:
    """The words of a JSON reading failure for the page: a file's as the engine words them, a
    link's with "its data" for "the file"."""
    if kind != "link":
        return exc.plain
    text = str(exc)
    tail = text[len(name) + 2:] if text.startswith(f"{name}: ") else text
    return f"its data cannot be read as an input: {tail}"


def read_input(text: str, name: str, kind: str, max_branches: int) -> dict:
    """A scenario file's text (``kind`` "file") or a link's unpacked text (``kind`` "link", a
    snapshot ``{"mode", "scenario"}``), read for the page in the order that costs least:
    the JSON read by ``somaward.jsonin`` (depth, number length and repeated keys limited; one
    line with its line and column), the shape of a snapshot, the number of branches (at most
    ``max_branches``, the page's branch table), then the keys of older versions renamed and the
    scenario checked by ``somaward.validate``. Returns ``{"mode", "scenario", "warnings"}``: the
    scenario as given (renamed, no default filled in) and the renaming's warnings.

    Raises ``ScenarioError`` (the JSON or a field) or :class:`Refused` (a plain sentence).
    """
    try:
        value = jsonin.parse(text, name)
    except jsonin.JSONInputError as exc:
        raise Refused(_as_place(exc, name, kind)) from None
    mode = "tree"
    if kind == "link":
        if not (isinstance(value, dict) and value.get("mode") in ("quick", "tree")
                and isinstance(value.get("scenario"), dict)):
            raise Refused("it does not hold a Somaward input (mode and scenario)")
        mode, value = value["mode"], value["scenario"]
    branches = value.get("branches") if isinstance(value, dict) else None
    if isinstance(branches, list) and len(branches) > max_branches:
        where = ("save its scenario with “Save that cell's scenario as JSON” and compute it on the command line: "
                 "somaward report FILE" if kind == "link"
                 else f"compute it on the command line: somaward report {name}")
        raise Refused(f"the cell has {len(branches):,} branches, too many for the page's branch table, which holds "
                      f"at most {max_branches:,}; {where}", "TooLarge")
    new, warnings = rename_old_keys(value)
    somaward.validate(new)
    return {"mode": mode, "scenario": new, "warnings": warnings}


# Engine functions the page may call (name → function); later sections add theirs here.
FUNCTIONS = {
    "solve": somaward.solve,
    "validate": somaward.validate,
    "upgrade": upgrade,
    "read_input": read_input,
    "paper": paper,
}

FAULT = ("The calculator could not compute these inputs. Change a value and try again, or reload the page; "
         "if it keeps happening, save the scenario as JSON and report it with that file.")


def internal_words(fingerprint: str) -> str:
    """The page's sentence for the engine's last guard (a report that would hold a NaN or inf)."""
    return ("The calculator hit a fault of its own on these inputs (its result would hold a value that is not "
            "a number); this is a bug in Somaward, not a mistake of yours: please report it with the scenario "
            f"saved as JSON (fingerprint {fingerprint}).")


def one_line(exc: BaseException, limit: int = 300) -> str:
    """An exception as one line for the console: its type and the first line of its message."""
    lines = str(exc).strip().splitlines()
    text = f"{type(exc).__name__}: {lines[0]}" if lines else type(exc).__name__
    return text if len(text) <= limit else text[:limit - 1] + "…"


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
    except Refused as exc:
        return _error(exc.kind, exc.plain, None, exc.plain)
    except somaward.InternalError as exc:
        return _error("InternalError", one_line(exc), None, internal_words(getattr(exc, "fingerprint", "unknown")))
    except Exception as exc:  # noqa: BLE001 (anything else is a bug; say so, one line)
        return _error("InternalError", one_line(exc))


def versions() -> str:
    """Versions of what the worker loaded, as a JSON string."""
    import numpy

    return json.dumps({"engine": getattr(somaward, "__version__", None),
                       "numpy": numpy.__version__})
