"""Reading a scenario safely: bytes → UTF-8 text → JSON, every failure one line with its place.

A file or stdin is read as bytes and decoded as UTF-8 (a UTF-8 byte-order mark is accepted and
dropped); the text is then parsed as JSON with two limits that keep the parser itself out of
trouble — nesting depth (:data:`MAX_DEPTH`) and the length of a number (:data:`MAX_NUMBER_CHARS`)
— checked by a scan that does not recurse, before ``json.loads`` runs. A key that appears twice
in one object is refused too, since the second would silently replace the first.

Every failure is a :class:`JSONInputError` (a :class:`~somaward.errors.ScenarioError`, so the CLI
already answers it with exit code 2) whose message is one line naming the input, what is wrong
and where: ``scenario.json: not valid JSON: Expecting ',' delimiter at line 3 column 7``.

Standard library only. Values the JSON grammar allows but a scenario does not (NaN, 1e400,
a 310-digit integer) are left to the engine, which names the field they sit in.
"""

import json
import re
import sys

from .errors import ScenarioError

__all__ = ["JSONInputError", "MAX_DEPTH", "MAX_NUMBER_CHARS", "decode", "parse", "load_bytes", "load_path"]

MAX_DEPTH = 64               # a scenario nests 5 levels; solve() names the field beyond 32
MAX_NUMBER_CHARS = 400       # the longest float is 1.7976931348623157e308 (309 digits written out)

_UTF8_BOM = b"\xef\xbb\xbf"
_UTF16_BOMS = (b"\xff\xfe", b"\xfe\xff")

# Strings whole (so brackets inside them do not count), a quote that opens no complete string,
# brackets, and number-like runs longer than the limit.
_TOKENS = re.compile(r'"[^"\\]*(?:\\.[^"\\]*)*"|["\[\]{}]|[-+.0-9eE]{%d,}' % (MAX_NUMBER_CHARS + 1), re.DOTALL)
# \uD800–\uDFFF escapes after an even number of backslashes; pairs are checked one by one.
_SURROGATE = re.compile(r'(?<!\\)(?:\\\\)*\\u([dD][89a-fA-F][0-9a-fA-F]{2})')


class JSONInputError(ScenarioError):
    """Input that is not UTF-8 JSON within the limits; one line with the line and column.

    A :class:`~somaward.errors.ScenarioError` with an empty path, so the CLI answers it with exit
    code 2 and the page shows its plain form.

    Parameters
    ----------
    name : str
        The input's name in the message (a file name or ``stdin``).
    what : str
        What is wrong, e.g. ``not valid JSON: Expecting ',' delimiter``.
    line, column : int, optional
        Where the problem is (from 1), when it has a place.
    advice : str, optional
        What to do about it, appended after a semicolon.

    Attributes
    ----------
    name : str
    line, column : int or None
    """

    def __init__(self, name, what, line=None, column=None, advice=""):
        self.name, self.line, self.column = name, line, column
        where = f" at line {line} column {column}" if line is not None else ""
        tail = f"{what}{where}{'; ' + advice if advice else ''}"
        super().__init__("", f"{name}: {tail}", f"the file cannot be read as a scenario: {tail}")


def _place(text, pos):
    """(line, column) from 1 of character offset ``pos`` in ``text``."""
    line = text.count("\n", 0, pos) + 1
    return line, pos - (text.rfind("\n", 0, pos) + 1) + 1


def decode(data, name="input"):
    """UTF-8 bytes → text, dropping a UTF-8 byte-order mark.

    Parameters
    ----------
    data : bytes or str
        The input (text is returned without its byte-order mark).
    name : str, default "input"
        The input's name in messages (a file name or ``stdin``).

    Returns
    -------
    str

    Raises
    ------
    JSONInputError
        For bytes that are not UTF-8 (with the line and column of the first bad byte), for text
        that starts with a UTF-16 byte-order mark, and for a NUL byte (UTF-16 or UTF-32 text
        without a byte-order mark is valid UTF-8 full of NULs, and JSON never holds one).
    """
    if isinstance(data, str):
        return data[1:] if data.startswith("\ufeff") else data
    data = bytes(data)
    if data.startswith(_UTF8_BOM):
        data = data[len(_UTF8_BOM):]
    elif data[:2] in _UTF16_BOMS:
        raise JSONInputError(name, f"not UTF-8 text: the bytes {data[0]:02x} {data[1]:02x} are a UTF-16 "
                             "byte-order mark", 1, 1, "save the file as UTF-8")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as err:
        start = data.rfind(b"\n", 0, err.start) + 1
        line = data.count(b"\n", 0, err.start) + 1
        column = len(data[start:err.start].decode("utf-8")) + 1
        raise JSONInputError(name, f"not UTF-8 text: the byte {data[err.start]:02x} ({err.reason})", line, column,
                             "save the file as UTF-8") from None
    if "\x00" in text:                      # JSON never holds a NUL byte; UTF-16/32 text is full of them
        raise JSONInputError(name, "not UTF-8 text: a NUL byte (00), as in UTF-16 or UTF-32 text",
                             *_place(text, text.index("\x00")), "save the file as UTF-8")
    return text


def _scan(text, name):
    """Depth, number length and unpaired surrogates, without recursion and without parsing."""
    depth = 0
    for m in _TOKENS.finditer(text):
        c = text[m.start()]
        if c in "[{":
            depth += 1
            if depth > MAX_DEPTH:
                raise JSONInputError(name, f"lists and objects nested more than {MAX_DEPTH} levels deep",
                                     *_place(text, m.start()), "a scenario nests at most 5 levels")
        elif c in "]}":
            depth -= 1
        elif c == '"':
            if m.end() - m.start() == 1:
                return                      # an unterminated string: json.loads says where
        else:
            raise JSONInputError(name, f"a number {m.end() - m.start()} characters long", *_place(text, m.start()),
                                 f"a number may have at most {MAX_NUMBER_CHARS} characters")
    if "\\u" in text:
        _check_surrogates(text, name)


_HALF = "a \\u escape that is half of a UTF-16 surrogate pair, not a character"


def _check_surrogates(text, name):
    pending = None                          # end offset of a high surrogate waiting for its low half
    for m in _SURROGATE.finditer(text):
        value = int(m.group(1), 16)
        at = m.start(1) - 2
        if pending is not None:
            if value >= 0xDC00 and at == pending:
                pending = None
                continue
            raise JSONInputError(name, _HALF, *_place(text, pending - 6))
        if value >= 0xDC00:
            raise JSONInputError(name, _HALF, *_place(text, at))
        pending = m.end()
    if pending is not None:
        raise JSONInputError(name, _HALF, *_place(text, pending - 6))


class _Duplicate(Exception):
    def __init__(self, key):
        self.key = key


def _pairs(pairs):
    out = dict(pairs)
    if len(out) != len(pairs):
        seen = set()
        for key, _ in pairs:
            if key in seen:
                raise _Duplicate(key)
            seen.add(key)
    return out


def _first_duplicate(text):
    """(key, line, column) of the first key, in reading order, that repeats within its object;
    called only after the parser found one (then the text is known to be valid JSON)."""
    stack = []                              # per open bracket: the set of keys, or None for a list
    for m in re.finditer(r'"[^"\\]*(?:\\.[^"\\]*)*"\s*:|"[^"\\]*(?:\\.[^"\\]*)*"|[\[\]{}]', text, re.DOTALL):
        c = m.group()
        if c in "[{":
            stack.append(set() if c == "{" else None)
        elif c in "]}":
            if stack:
                stack.pop()
        elif c.endswith(":") and stack and stack[-1] is not None:
            k = json.loads(c[:-1].rstrip())
            if k in stack[-1]:
                return (k, *_place(text, m.start()))
            stack[-1].add(k)
    return None


def parse(text, name="input"):
    """JSON text → value, within the limits of depth and number length, with no repeated key.

    Parameters
    ----------
    text : str
        JSON text (a leading byte-order mark is dropped).
    name : str, default "input"
        The input's name in messages (a file name or ``stdin``).

    Returns
    -------
    any
        The value, objects as dicts.

    Raises
    ------
    JSONInputError
        One line with its line and column for every failure.
    """
    if text.startswith("\ufeff"):
        text = text[1:]
    _scan(text, name)
    try:
        return json.loads(text, object_pairs_hook=_pairs)
    except json.JSONDecodeError as err:
        msg = err.msg[:-3] if err.msg.endswith(" at") else err.msg      # "Unterminated string starting at"
        raise JSONInputError(name, f"not valid JSON: {msg}", err.lineno, err.colno) from None
    except _Duplicate as dup:
        key, *place = _first_duplicate(text) or (dup.key, None, None)
        quoted = "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in json.dumps(key, ensure_ascii=False))
        quoted = quoted if len(quoted) <= 80 else quoted[:78] + '…"'
        raise JSONInputError(name, f"the key {quoted} appears twice in one object", *place,
                             "the second would silently replace the first") from None
    except (RecursionError, ValueError, OverflowError) as err:   # a limit the scan missed: still one line
        raise JSONInputError(name, f"not valid JSON: {type(err).__name__}: {str(err).splitlines()[0][:120]}") \
            from None


def load_bytes(data, name="input"):
    """UTF-8 JSON bytes (a BOM accepted) → value.

    Parameters
    ----------
    data : bytes
        The input's bytes.
    name : str, default "input"
        The input's name in messages (a file name or ``stdin``).

    Returns
    -------
    any

    Raises
    ------
    JSONInputError
        On any failure (:func:`decode`, :func:`parse`).

    Examples
    --------
    >>> load_bytes(b'\\xef\\xbb\\xbf{"membrane": {"Rm": 20000}}')      # with a UTF-8 byte-order mark
    {'membrane': {'Rm': 20000}}
    """
    return parse(decode(data, name), name)


def load_path(path):
    """Read a scenario file as bytes and parse it.

    Parameters
    ----------
    path : str or path-like
        The file; ``"-"`` reads stdin.

    Returns
    -------
    any

    Raises
    ------
    JSONInputError
        On any failure, named by the file (``stdin`` for ``"-"``), including a file that cannot
        be read.
    """
    if path == "-":
        return load_bytes(sys.stdin.buffer.read(), "stdin")
    try:
        with open(path, "rb") as fh:
            data = fh.read()
    except OSError as err:
        raise JSONInputError(str(path), f"cannot read the file ({err.strerror or type(err).__name__})") from None
    return load_bytes(data, str(path))
