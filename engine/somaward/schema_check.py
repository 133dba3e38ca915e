"""A small pure-Python reader of the JSON Schema subset that the scenario contract uses.

The published schema (``scenario.schema.json``) is the one place the structural rules live; this
module walks it to check a scenario, word the first broken rule as one line naming its JSON
path, and fill in the ``default`` values. It runs anywhere the engine runs (also in the page,
where no compiled validator is available). Supported keywords: type, properties, required,
additionalProperties: false, items, minItems, maxItems, minLength, maxLength, enum, const,
minimum, maximum, exclusiveMinimum, oneOf, $ref (local), default, and the annotations x-unit
and x-message. ``tests/test_schema.py`` checks that it agrees with the ``jsonschema`` package.

Hostile input (issue 9): :func:`check_depth` refuses nesting beyond :data:`MAX_DEPTH` without
recursing, before anything else looks at the value; numbers are compared with their bounds as
Python numbers, so an integer of 10 000 digits is out of range rather than an OverflowError;
every key and value quoted in a message is escaped to one line (:func:`quote_key`,
:func:`describe`), and strings that UTF-8 cannot hold (half of a surrogate pair) are refused.
"""

import copy
import difflib
import functools
import json
import math
import re
from importlib import resources

from .errors import ScenarioError

__all__ = ["load_schema", "check", "check_depth", "MAX_DEPTH", "did_you_mean", "describe", "quote_key",
           "one_line", "join_path", "schema_fields", "field_of_path"]

_TYPE_WORDS = {"object": "an object", "array": "a list", "string": "a string", "number": "a number",
               "null": "null", "boolean": "true or false"}


@functools.lru_cache(maxsize=1)
def _schema_text():
    return resources.files("somaward").joinpath("scenario.schema.json").read_text("utf-8")


@functools.lru_cache(maxsize=1)
def _cached_schema():
    return json.loads(_schema_text())


def load_schema():
    """The scenario JSON Schema shipped inside the package, as a new dict."""
    return json.loads(_schema_text())


@functools.lru_cache(maxsize=1)
def _fields():
    root = _cached_schema()
    out = {}

    def resolve(node):
        while "$ref" in node:
            target = root
            for part in node["$ref"][2:].split("/"):
                target = target[part]
            node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        return node

    def walk(node, path):
        node = resolve(node)
        if "x-label" in node:
            entry = out.setdefault(path, {})
            for key, name in (("x-label", "label"), ("x-unit", "unit"), ("description", "description"),
                              ("default", "default")):
                if key in node:
                    entry.setdefault(name, node[key])
        if node.get("type") == "array" and "items" in node:
            items = resolve(node["items"])
            if path in out and "x-unit" in items:
                out[path].setdefault("unit", items["x-unit"])
            walk(items, path + "[]")
        for key, sub in node.get("properties", {}).items():
            walk(sub, f"{path}.{key}" if path else key)
        for alt in node.get("oneOf", []):
            walk(alt, path)

    walk(root, "")
    return {k: {"label": v["label"], "unit": v.get("unit", ""), "description": v.get("description", ""),
                "default": v.get("default")}
            for k, v in out.items()}


def schema_fields():
    """Every labelled scenario field: canonical path → ``{label, unit, description, default}``
    (``default`` None where the schema gives none).

    Paths use ``[]`` for list items (``branches[].cylinders[].diameter``); labels are in the
    markup of :mod:`somaward.quantities`. The schema is their one source.

    >>> schema_fields()["membrane.Ri"]["unit"]
    'Ω·cm'
    """
    return copy.deepcopy(_fields())


def field_of_path(path):
    """The canonical labelled field of a concrete JSON path, or of its nearest labelled parent.

    Parameters
    ----------
    path : str
        A concrete JSON path of the scenario.

    Returns
    -------
    str or None
        The schema path with ``[]`` for list items, or None when nothing on the path is labelled.

    Examples
    --------
    >>> field_of_path("branches[3].cylinders[0].diameter")
    'branches[].cylinders[].diameter'
    >>> field_of_path("membrane.bogus")
    'membrane'
    """
    import re

    fields = _fields()
    canon = re.sub(r"\[\d+\]", "[]", path)
    while canon and canon not in fields:
        cut = max(canon.rfind("."), canon.rfind("["))
        canon = canon[:cut] if cut > 0 else ""
    return canon or None


def describe(value, limit=40):
    """A short one-line quotation of a user's value for an error message ('text', 12.5, null, …).

    Never raises: strings are quoted with their line breaks and other invisible characters
    escaped, integers too long for a float are described by their number of digits, and values
    that are not JSON are named by their type.

    Parameters
    ----------
    value : any
        The user's value.
    limit : int, default 40
        Longest quotation in characters; longer ones end in "…".

    Returns
    -------
    str

    Examples
    --------
    >>> describe(10 ** 400)
    'an integer of 401 digits'
    >>> describe({"a": [1, 2]})
    '{"a": [1, 2]}'
    """
    if isinstance(value, str):
        text = repr(value)                  # repr escapes every non-printable character
    elif isinstance(value, int) and not isinstance(value, bool) and abs(value) > _FLOAT_MAX:
        text = f"{'a negative' if value < 0 else 'an'} integer of {_digits(value)} digits"
    elif isinstance(value, float):
        text = json.dumps(value) if math.isfinite(value) else repr(value)
    elif isinstance(value, (dict, list)):
        try:
            text = json.dumps(value, ensure_ascii=False, allow_nan=False)
        except (TypeError, ValueError, RecursionError):
            text = "an object" if isinstance(value, dict) else "a list"
        text = one_line(text[:limit + 1])
    else:
        text = json.dumps(value) if _jsonable(value) else type(value).__name__
    return text if len(text) <= limit else text[: limit - 1] + "…"


_FLOAT_MAX = 1.7976931348623157e308


def _digits(n):
    """Number of decimal digits of a big integer, without converting it to text (which Python
    refuses above 4,300 digits)."""
    n = abs(n)
    d = max(1, int((n.bit_length() - 1) * 0.30102999566398120) + 1)
    while n >= 10 ** d:
        d += 1
    while d > 1 and n < 10 ** (d - 1):
        d -= 1
    return d


def quote_key(key, limit=100):
    """A key as it appears in a JSON path, always on one line.

    Bare when it is a plain name (``membrane``), else a double-quoted JSON string with every
    invisible or line-breaking character escaped (``["a\\nb"]``, ``[""]``).

    Parameters
    ----------
    key : str
        An object key.
    limit : int, default 100
        Keys longer than this many characters are cut, with … before the closing quote.

    Returns
    -------
    str
    """
    if len(key) <= limit and _PLAIN_KEY.fullmatch(key):
        return key
    cut = key if len(key) <= limit else key[:limit]
    text = json.dumps(cut, ensure_ascii=False)
    text = "".join(c if c.isprintable() else _u_escape(c) for c in text)
    return text if cut is key else text[:-1] + '…"'


def _u_escape(c):
    o = ord(c)
    if o > 0xFFFF:                          # JSON writes astral characters as a surrogate pair
        o -= 0x10000
        return f"\\u{0xD800 + (o >> 10):04x}\\u{0xDC00 + (o & 0x3FF):04x}"
    return f"\\u{o:04x}"


def _jsonable(value):
    try:
        json.dumps(value, allow_nan=False)
        return True
    except (TypeError, ValueError):
        return False


def one_line(text):
    """``text`` with every character that would break or hide a line escaped (for messages).

    Parameters
    ----------
    text : str

    Returns
    -------
    str
    """
    return "".join(c if c.isprintable() else _u_escape(c) for c in text)


def did_you_mean(word, choices):
    """`` did you mean 'x'?`` for the closest of ``choices``, or an empty string.

    Parameters
    ----------
    word : any
        What the user wrote (turned into text).
    choices : iterable
        The allowed values (turned into text).

    Returns
    -------
    str
        ``"; did you mean 'x'?"`` or ``""``.

    Examples
    --------
    >>> did_you_mean("trnk", ["trunk", "tuft"])
    "; did you mean 'trunk'?"
    """
    close = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return f"; did you mean {describe(close[0])}?" if close else ""


_PY_TYPES = {"object": (dict,), "array": (list,), "string": (str,), "number": (int, float),
             "null": (type(None),), "boolean": (bool,)}


def _is_type(value, name):
    if name == "number":
        return isinstance(value, (int, float)) and not isinstance(value, bool)
    if name == "object":
        return isinstance(value, dict)
    if name == "array":
        return isinstance(value, list)
    if name == "string":
        return isinstance(value, str)
    if name == "null":
        return value is None
    if name == "boolean":
        return isinstance(value, bool)
    raise KeyError(name)


def _fmt(x):
    """A schema bound for reading: 1000000 as 1000000, 1e9 as 1e9, 0.001 as 0.001."""
    if float(x).is_integer() and abs(x) < 1e7:
        return str(int(x))
    text = f"{float(x):g}"
    if "e" in text:
        mant, exp = text.split("e")
        text = f"{mant}e{int(exp)}"
    return text


def _allowed(node, u):
    """The plausible range of a number in words ('from 0.001 to 1000 µm'), or None if unbounded."""
    if "maximum" not in node:
        return None
    if "minimum" in node:
        return f"from {_fmt(node['minimum'])} to {_fmt(node['maximum'])}{u}"
    if "exclusiveMinimum" in node:
        return f"greater than {_fmt(node['exclusiveMinimum'])} and up to {_fmt(node['maximum'])}{u}"
    return None


def _plain_missing(node):
    return f"enter a number{_in(node.get('x-unit'))}" if node.get("type") == "number" else "enter a value"


def _in(unit):
    return f" in {unit}" if unit else ""


_PLAIN_KEY = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_SURROGATE = re.compile("[\ud800-\udfff]")


def join_path(path, key, root="scenario"):
    """The JSON path of ``key`` inside ``path``.

    ``""`` is the whole value, written ``root`` when a path would otherwise start with a bracket
    (``scenario[""]``, ``scenario[0]``).

    Parameters
    ----------
    path : str
        The path of the containing object or list ("" for the whole value).
    key : str or int
        The key (or list index) inside it.
    root : str, default "scenario"
        The name of the whole value, for a path that starts with a bracket.

    Returns
    -------
    str

    Examples
    --------
    >>> join_path("branches", 2), join_path("", "membrane"), join_path("", 0, root="report")
    ('branches[2]', 'membrane', 'report[0]')
    """
    if isinstance(key, int):
        return f"{path or root}[{key}]"
    if not isinstance(key, str):
        key = repr(key)
    name = quote_key(key)
    if name is key:
        return f"{path}.{key}" if path else key
    return f"{path or root}[{name}]"


class _Checker:
    def __init__(self, schema):
        self.root = schema
        self._resolved = {}
        self._py_types = {}      # id(node) -> (Python types, booleans allowed)

    def resolve(self, node):
        """The node with its local ``$ref`` followed (cached: the schema does not change)."""
        key = id(node)
        hit = self._resolved.get(key)
        if hit is not None:
            return hit[1]
        out = node
        while "$ref" in out:
            ref = out["$ref"]
            if not ref.startswith("#/"):
                raise KeyError(ref)
            target = self.root
            for part in ref[2:].split("/"):
                target = target[part]
            out = {**target, **{k: v for k, v in out.items() if k != "$ref"}}
        self._resolved[key] = (node, out)         # keep node alive so its id stays unique
        return out

    def check(self, value, node, path):
        """Return ``value`` with defaults filled in, or raise ScenarioError."""
        node = self.resolve(node)
        if "oneOf" in node:
            return self.one_of(value, node, path)
        unit = node.get("x-unit")
        self.check_type(value, node, path, unit)
        if "const" in node and value != node["const"]:
            raise ScenarioError(path, f"must be {describe(node['const'])}, got {describe(value)}")
        if "enum" in node and value not in node["enum"]:
            allowed = ", ".join(describe(e) for e in node["enum"])
            raise ScenarioError(path, f"must be one of {allowed}, got {describe(value)}"
                                + did_you_mean(value, node["enum"]), f"choose one of {allowed}")
        if _is_type(value, "number"):
            self.check_number(value, node, path, unit)
        elif isinstance(value, str):
            self.check_string(value, node, path)
        elif isinstance(value, list):
            return self.check_array(value, node, path)
        elif isinstance(value, dict):
            return self.check_object(value, node, path)
        return value

    def check_type(self, value, node, path, unit):
        types = node.get("type")
        if types is None:
            return
        py = self._py_types.get(id(node))
        if py is None:
            names = [types] if isinstance(types, str) else types
            py = self._py_types[id(node)] = (tuple(t for n in names for t in _PY_TYPES[n]), "boolean" in names)
        if not isinstance(value, py[0]) or (isinstance(value, bool) and not py[1]):
            names = [types] if isinstance(types, str) else types
            words = " or ".join(_TYPE_WORDS[t] for t in names)
            unit_words = f" ({unit})" if unit else ""
            plain = f"enter a number{_in(unit)}" if names == ["number"] else f"must be {words}"
            raise ScenarioError(path, f"must be {words}{unit_words}, got {describe(value)}", plain)

    def check_number(self, value, node, path, unit):
        """Finite, then the sign rule (> 0 or ≥ 0), then the plausible range.

        A broken sign rule keeps its short wording (``must be > 0 µm, got -1``); a value outside
        the plausible range names it (``must be ≤ 1000 µm (allowed: from 0.001 to 1000 µm),
        got 1e+250``). Integers too large for a float are out of range, never an OverflowError:
        Python compares an int with a float bound exactly.
        """
        u = f" {unit}" if unit else ""
        got = f"got {describe(value)}"
        if isinstance(value, float) and not math.isfinite(value):
            raise ScenarioError(path, f"must be a finite number{f' ({unit})' if unit else ''}, got {value}",
                                f"enter a finite number{_in(unit)}")
        lo, hi, allowed = node.get("minimum"), node.get("maximum"), _allowed(node, u)
        if "exclusiveMinimum" in node and not value > node["exclusiveMinimum"]:
            raise ScenarioError(path, f"must be > {_fmt(node['exclusiveMinimum'])}{u}, {got}",
                                f"enter a number greater than {_fmt(node['exclusiveMinimum'])}{u}")
        if lo is not None and not value >= lo:
            if lo == 0 or allowed is None:
                raise ScenarioError(path, f"must be ≥ {_fmt(lo)}{u}, {got}",
                                    f"enter a number of at least {_fmt(lo)}{u}")
            raise ScenarioError(path, f"must be ≥ {_fmt(lo)}{u} (allowed: {allowed}), {got}",
                                f"enter a number {allowed}")
        if hi is not None and not value <= hi:
            if allowed is None:
                raise ScenarioError(path, f"must be ≤ {_fmt(hi)}{u}, {got}",
                                    f"enter a number of at most {_fmt(hi)}{u}")
            raise ScenarioError(path, f"must be ≤ {_fmt(hi)}{u} (allowed: {allowed}), {got}",
                                f"enter a number {allowed}")
        if isinstance(value, int) and abs(value) > _FLOAT_MAX:     # no bound in the schema: still a float
            raise ScenarioError(path, f"must be a finite number{f' ({unit})' if unit else ''}, {got}",
                                f"enter a finite number{_in(unit)}")

    def check_string(self, value, node, path):
        if len(value) < node.get("minLength", 0):
            raise ScenarioError(path, "must not be empty" if node["minLength"] == 1
                                else f"must have at least {node['minLength']} characters")
        if "maxLength" in node and len(value) > node["maxLength"]:
            raise ScenarioError(path, f"must have at most {node['maxLength']} characters, got {len(value)}")
        half = _SURROGATE.search(value)
        if half:                            # a Python str may hold one; no UTF-8 file or page can
            raise ScenarioError(path, f"must be text that UTF-8 can hold; character {half.start() + 1} is half "
                                f"of a UTF-16 surrogate pair (\\u{ord(half.group()):04x}), got {describe(value)}",
                                "remove the character that is not text")

    def check_array(self, value, node, path):
        if len(value) < node.get("minItems", 0):
            raise ScenarioError(path, f"must have at least {node['minItems']} item(s), got {len(value)}")
        if "maxItems" in node and len(value) > node["maxItems"]:
            raise ScenarioError(path, f"must have at most {node['maxItems']} items, got {len(value)}")
        items = node.get("items")
        if items is None:
            return list(value)
        return [self.check(v, items, join_path(path, i)) for i, v in enumerate(value)]

    def check_object(self, value, node, path):
        props = node.get("properties", {})
        for key in value:
            if not isinstance(key, str):
                raise ScenarioError(path, f"keys must be strings, got {describe(key)}")
            if node.get("additionalProperties", True) is False and key not in props:
                raise ScenarioError(join_path(path, key), "unknown key" + did_you_mean(key, props)
                                    + f" (allowed here: {', '.join(props)})",
                                    f"unknown entry {describe(key)}" + did_you_mean(key, props), path)
        for key in node.get("required", []):
            if key not in value:
                hint = self.resolve(props.get(key, {})).get("description", "").split(". ")[0]
                raise ScenarioError(path or "scenario", f"missing required key {key!r}"
                                    + (f" ({hint[0].lower()}{hint[1:].rstrip('.')})" if hint else ""),
                                    _plain_missing(self.resolve(props.get(key, {}))), join_path(path, key))
        out = {}
        for key, sub in props.items():
            if key in value:
                out[key] = self.check(value[key], sub, join_path(path, key))
            elif "default" in self.resolve(sub):
                out[key] = copy.deepcopy(self.resolve(sub)["default"])
        return out

    def one_of(self, value, node, path):
        plausible = self.plausible(value, node["oneOf"])
        if len(plausible) == 1:            # the form is clear from the keys: check it alone
            return self.check(value, plausible[0], path)
        outcomes = []                       # (filled value, None) or (None, error) per alternative
        for alt in node["oneOf"]:
            try:
                outcomes.append((self.check(value, alt, path), None))
            except ScenarioError as err:
                outcomes.append((None, err))
        passed = [filled for filled, err in outcomes if err is None]
        if len(passed) == 1:
            return passed[0]
        message = node.get("x-message", "does not match any allowed form")
        if len(passed) > 1:
            raise ScenarioError(path or "scenario", f"{message}, not both")
        best = self.closest(value, node["oneOf"], path)
        if best is not None:
            raise outcomes[best][1]
        if isinstance(value, dict):
            raise ScenarioError(path or "scenario", message)
        raise ScenarioError(path or "scenario", f"{message}; got {describe(value)}")

    def plausible(self, value, alts):
        """Alternatives of the value's type whose keys and constants it matches (objects only)."""
        out = []
        for alt in alts:
            a = self.resolve(alt)
            if "type" in a and not _is_type(value, a["type"]):
                continue
            if isinstance(value, dict):
                props = a.get("properties", {})
                if a.get("additionalProperties", True) is False and any(k not in props for k in value):
                    continue
                if any("const" in p and k in value and value[k] != p["const"] for k, p in props.items()):
                    continue
                if any(k not in value for k in a.get("required", [])):
                    continue
            out.append(a)
        return out

    def closest(self, value, alts, path):
        """The alternative a failing value most plausibly meant, or None when it is unclear.

        An alternative is meant when it alone has the value's type, or when the value carries
        its discriminating constant (e.g. ``shape``), or when only it has its own required keys
        present. A value that mixes two forms is unclear.
        """
        alts = [self.resolve(a) for a in alts]
        typed = [i for i, a in enumerate(alts) if "type" not in a or _is_type(value, a["type"])]
        if len(typed) == 1:
            return typed[0]
        if not typed and len({a.get("type") for a in alts}) == 1:
            return 0                        # one shared type, and the value is not of it
        if not typed or not isinstance(value, dict):
            return None
        self.check_discriminator(value, [alts[i] for i in typed], path)
        for i in typed:
            props = alts[i].get("properties", {})
            if any("const" in p and value.get(k) == p["const"] for k, p in props.items()):
                return i
        common = set.intersection(*(set(alts[i].get("required", [])) for i in typed))
        scores = [sum(1 for k in alts[i].get("required", []) if k in value and k not in common) for i in typed]
        if sum(1 for s in scores if s > 0) != 1:
            return None
        return typed[next(j for j, s in enumerate(scores) if s > 0)]

    def check_discriminator(self, value, alts, path):
        """A key that every alternative fixes with a const must hold one of those constants."""
        keys = set.intersection(*({k for k, p in a.get("properties", {}).items() if "const" in p} for a in alts))
        for key in sorted(keys):
            allowed = [a["properties"][key]["const"] for a in alts]
            if key in value and value[key] not in allowed:
                words = ", ".join(describe(c) for c in allowed)
                raise ScenarioError(join_path(path, key), f"must be one of {words}, got {describe(value[key])}"
                                    + did_you_mean(value[key], allowed))


MAX_DEPTH = 32      # the schema nests 5 levels (scenario → branches → branch → cylinders → cylinder)


def check_depth(value, limit=MAX_DEPTH):
    """Raise a ScenarioError when lists and objects nest more than ``limit`` levels deep.

    Runs before anything recursive (the schema walk, copies, error quotations), and does not
    recurse itself, so a list nested 10⁵ deep is one line, not a RecursionError. The message
    names the first few keys of the path to the too-deep value, which exist in the input.

    Parameters
    ----------
    value : any
        A value as read from JSON.
    limit : int, default MAX_DEPTH (32)
        The deepest nesting allowed (the scenario itself is level 1).

    Raises
    ------
    ScenarioError
        When ``value`` nests deeper than ``limit``.
    """
    if not isinstance(value, (dict, list)):
        return
    stack = [(value, 1, ())]
    while stack:
        node, depth, keys = stack.pop()
        if depth > limit:
            path = ""
            for key in keys:
                path = join_path(path, key)
            raise ScenarioError(path or "scenario",
                                f"nested more than {limit} levels deep (lists and objects in lists and "
                                f"objects); no scenario field is nested more than 5 levels",
                                "this entry is nested far too deep to be part of a scenario")
        items = node.items() if isinstance(node, dict) else enumerate(node)
        for key, sub in items:
            if isinstance(sub, (dict, list)):
                stack.append((sub, depth + 1, keys + (key,) if len(keys) < 4 else keys))


def check(value, schema=None):
    """Check ``value`` against the scenario schema; return it with defaults filled in.

    Parameters
    ----------
    value : dict
        A scenario as read from JSON (its nesting already checked by :func:`check_depth`).
    schema : dict, optional
        A JSON Schema in the supported subset; the published scenario schema when None (default).

    Returns
    -------
    dict
        A new value with the schema's ``default`` values filled in.

    Raises
    ------
    ScenarioError
        One line naming the JSON path and the rule, e.g.
        ``branches[2].diameter: must be > 0 µm, got -1``.
    """
    schema = _cached_schema() if schema is None else schema
    if not isinstance(value, dict):
        raise ScenarioError("scenario", f"must be a JSON object, got {describe(value)}",
                            "this is not a scenario: expected a JSON object with membrane, branches and synapse")
    return _Checker(schema).check(value, schema, "")
