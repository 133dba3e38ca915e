"""Test helpers (not a test module) for hostile input: does an error message start with a JSON
path of the input, and which numbers does the scenario schema hold, with what bounds?

The engine writes paths as ``membrane.Rm``, ``branches[2].cylinders[0].diameter``, keys that are
not plain names as JSON strings in brackets (``membrane["a\\nb"]``, ``scenario[""]``), and
``scenario`` for the whole input. :func:`path_in_message` reads such a path back from the start
of a message; :func:`resolves` checks that it names something in the input. Common practice, no
source: a contract of DEVELOPERS.md ("one clear line naming the JSON path").
"""

import json
import re

_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_INDEX = re.compile(r"\[(\d+)\]")
_QUOTED = re.compile(r'\[("(?:[^"\\]|\\.)*")\]')


def path_in_message(message):
    """(keys, rest) for a message ``"<path>: <rule>"``; keys is a list of str/int, or ``None``
    (a list) for the whole scenario. Raises AssertionError when no path starts the message."""
    m = _NAME.match(message)
    assert m or message.startswith("["), f"no JSON path at the start of {message!r}"
    pos, keys = (m.end(), [m.group()]) if m else (0, [])
    while True:
        if message.startswith(".", pos) and _NAME.match(message, pos + 1):
            m = _NAME.match(message, pos + 1)
            keys.append(m.group())
        elif _INDEX.match(message, pos):
            m = _INDEX.match(message, pos)
            keys.append(int(m.group(1)))
        elif _QUOTED.match(message, pos):
            m = _QUOTED.match(message, pos)
            keys.append(json.loads(m.group(1)))
        else:
            break
        pos = m.end()
    assert message.startswith(": ", pos), f"the path is not followed by ': ' in {message!r}"
    return keys, message[pos + 2:]


def resolves(value, keys):
    """True when ``keys`` (from :func:`path_in_message`) name a place inside ``value``.

    A leading ``scenario`` names the whole input unless the input has a key of that name. The old
    key ``sections`` answers to ``cylinders`` (the engine renames it before checking); a key
    cut short with … answers to the key it starts.
    """
    if keys and keys[0] == "scenario" and not (isinstance(value, dict) and "scenario" in value):
        keys = keys[1:]
    node = value
    for key in keys:
        if isinstance(key, int):
            if not isinstance(node, list) or not 0 <= key < len(node):
                return False
            node = node[key]
        else:
            if not isinstance(node, dict):
                return False
            if key not in node and key == "cylinders" and "sections" in node:
                key = "sections"
            if key not in node and key.endswith("…"):          # a long key, cut in the message
                key = next((k for k in node if isinstance(k, str) and len(k) >= len(key)
                            and k.startswith(key[:-1])), key)
            if key not in node:
                return False
            node = node[key]
    return True


def one_line(text):
    """True when ``text`` is one line for every reader (no \\n, \\r, \\x85, \\u2028, …)."""
    return len(text.splitlines()) == 1 and text.isprintable()


def numeric_fields():
    """Every number in the scenario schema: canonical path (``branches[].end.G``) → its node,
    with ``$ref`` followed (so ``minimum``, ``maximum``, ``exclusiveMinimum``, ``x-unit``)."""
    from somaward.schema_check import load_schema

    schema = load_schema()
    out = {}

    def resolve(node):
        while "$ref" in node:
            target = schema
            for part in node["$ref"][2:].split("/"):
                target = target[part]
            node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        return node

    def walk(node, path):
        node = resolve(node)
        if node.get("type") == "number":
            out.setdefault(path, node)
        if "items" in node:
            walk(node["items"], path + "[]")
        for key, sub in node.get("properties", {}).items():
            walk(sub, f"{path}.{key}" if path else key)
        for alt in node.get("oneOf", []):
            walk(alt, path)

    walk(schema, "")
    return out
