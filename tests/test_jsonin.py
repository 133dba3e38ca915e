"""Reading scenario files safely (issue 9, classes 1–3): somaward.jsonin, and the CLI through it.

Common practice, no source: contract tests of DEVELOPERS.md ("bad input gives one clear line …
never a traceback"). Line and column numbers are counted from 1, as Python's json module does;
the expected places below are computed by hand from each invented input.

The tests marked ``needs_cli_wiring`` run the CLI (``python -m somaward report``) and switch
themselves on once ``cli.py`` reads its input through ``somaward.jsonin.load_path``.
"""

import io
import json
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import somaward
import somaward.cli
from input_paths import one_line
from somaward import ScenarioError
from somaward.jsonin import MAX_DEPTH, MAX_NUMBER_CHARS, JSONInputError, decode, load_bytes, load_path, parse

EXAMPLE = {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
           "branches": [{"id": "trunk", "parent": None, "length": 400, "diameter": 3.0},
                        {"id": "tuft", "parent": "trunk", "length": 300, "diameter": 1.0}],
           "synapse": {"branch": "tuft", "distance": 250}, "frequencies_hz": [0, 10], "map_spacing_um": 100}
TEXT = json.dumps(EXAMPLE, indent=2)


def _fails(data, line=None, column=None, words=None, name="cell.json"):
    with pytest.raises(JSONInputError) as info:
        load_bytes(data, name)
    err = info.value
    msg = str(err)
    assert one_line(msg) and msg.startswith(f"{name}: "), msg
    assert isinstance(err, ScenarioError) and err.path == ""
    if line is not None:
        assert (err.line, err.column) == (line, column), msg
        assert f"at line {line} column {column}" in msg
    if words is not None:
        assert words in msg, msg
    return err


def test_plain_utf8_and_a_bom():
    """UTF-8 with and without a byte-order mark reads the same value."""
    data = TEXT.encode("utf-8")
    assert load_bytes(data) == EXAMPLE
    assert load_bytes(b"\xef\xbb\xbf" + data) == EXAMPLE
    assert parse("\ufeff" + TEXT) == EXAMPLE and decode("\ufeffx") == "x"


@pytest.mark.parametrize("encoding", ["utf-16", "utf-16-le", "utf-16-be", "utf-32"])
def test_utf16_and_utf32(encoding):
    """A file saved as UTF-16/32 (with or without a BOM): one line, at its first bad byte."""
    _fails(TEXT.encode(encoding), words="not UTF-8 text")


def test_utf16_bom_is_named():
    _fails(b"\xff\xfe{\x00}\x00", 1, 1, "UTF-16 byte-order mark")


def test_invalid_byte_place():
    """Latin-1 'é' (byte e9) on line 3 after 'ab' and a two-byte 'µ': column counts characters."""
    data = b'{\n "x":\n "a\xc2\xb5b\xe9"}'
    _fails(data, 3, 6, "the byte e9")


@pytest.mark.parametrize("depth", [MAX_DEPTH + 1, 1_000, 100_000, 1_000_000])
def test_deep_nesting(depth):
    """JSON nested 1,000 deep made the CLI's json.loads raise RecursionError; now one line at the
    bracket that goes too deep."""
    text = " " + "[" * depth + "]" * depth
    _fails(text.encode(), 1, MAX_DEPTH + 2, f"nested more than {MAX_DEPTH} levels")
    mixed = '{"a": ' * depth + "1" + "}" * depth
    _fails(mixed.encode(), 1, 6 * MAX_DEPTH + 1)


def test_depth_at_the_limit_and_brackets_in_strings():
    """Exactly MAX_DEPTH levels parse; brackets inside strings (escaped quotes too) do not count."""
    assert parse("[" * MAX_DEPTH + "]" * MAX_DEPTH) is not None
    inside = '{"notes": "' + "[{" * 5000 + '\\" [[[' + '", "t": "]]]]"}'
    assert parse(inside)["t"] == "]]]]"


def test_long_numbers():
    """A 4,301-digit integer made json.loads raise ValueError; now one line with its place. A
    310-digit integer (beyond a double) still parses: the engine names its field."""
    _fails(b'{\n  "Rm": ' + b"1" * 4301 + b"}", 2, 9, "a number 4301 characters long")
    _fails(b"[0." + b"0" * MAX_NUMBER_CHARS + b"1]", 1, 2)
    assert parse("[" + "9" * MAX_NUMBER_CHARS + "]")[0] == int("9" * MAX_NUMBER_CHARS)
    big = parse('{"Rm": 1' + "0" * 309 + "}")["Rm"]
    assert big == 10 ** 309
    sc = json.loads(TEXT)
    sc["membrane"]["Rm"] = big
    with pytest.raises(ScenarioError, match=r"^membrane\.Rm: must be ≤ .*got an integer of 310 digits$"):
        somaward.solve(sc)


def test_duplicate_keys():
    """A key twice in one object would silently lose the first value: refused, at the second."""
    _fails(b'{"membrane": {"Rm": 1},\n "branches": [],\n "membrane": {"Ri": 2}}', 3, 2, 'the key "membrane"')
    _fails(b'{"a": {"x": 1}, "b": {"x": 1, "y": 2, "x": 3}}', 1, 39, 'the key "x"')
    _fails(b'{"x": 1, "b": {"y": 1, "y": 2}, "x": 3}', 1, 24, 'the key "y"')    # inner object first
    assert parse('{"a": {"x": 1}, "b": {"x": 2}}') == {"a": {"x": 1}, "b": {"x": 2}}


def test_half_surrogates():
    r"""'\ud800' alone is not a character (it could not be written back as UTF-8); a proper pair
    and an escaped backslash before 'ud800' are fine."""
    _fails(b'{"title": "ab\\ud800"}', 1, 14, "surrogate")
    _fails(b'{"title": "\\udc00x"}', 1, 12, "surrogate")
    _fails(b'{"title": "\\ud83d\\ud83d"}', 1, 12, "surrogate")
    assert parse('{"t": "\\ud83d\\ude00"}')["t"] == "\U0001F600"
    assert parse('{"t": "\\\\ud800"}')["t"] == "\\ud800"


@pytest.mark.parametrize("text, line, column", [
    ("", 1, 1), ("{", 1, 2), ('{"a": 1,}', 1, 9), ('{"a": 1}\n}', 2, 1), ('{"a": "x', 1, 7), ("[1, 2", 1, 6),
    ('{"a": "tab\there"}', 1, 11), ("{'a': 1}", 1, 2),
])
def test_syntax_errors_have_a_place(text, line, column):
    _fails(text.encode(), line, column, "not valid JSON")


def test_nan_and_infinity_are_left_to_the_engine():
    """JSON extensions Python reads (NaN, Infinity, 1e400 → inf): the engine names the field."""
    sc = parse(TEXT.replace('"Ri": 150', '"Ri": NaN'))
    with pytest.raises(ScenarioError, match=r"^membrane\.Ri: must be a finite number"):
        somaward.solve(sc)
    assert parse("[1e400]") == [float("inf")]


def test_files_and_stdin(tmp_path, monkeypatch):
    path = tmp_path / "cell.json"
    path.write_bytes(b"\xef\xbb\xbf" + TEXT.encode())
    assert load_path(str(path)) == EXAMPLE
    err = _missing(tmp_path / "nope.json")
    assert "cannot read the file" in str(err) and one_line(str(err))
    assert "cannot read the file" in str(_missing(tmp_path))                  # a directory
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(b"\xff\xfe\x00\x01")))
    with pytest.raises(JSONInputError, match=r"^stdin: not UTF-8 text"):
        load_path("-")


def _missing(path):
    with pytest.raises(JSONInputError) as info:
        load_path(str(path))
    return info.value


def test_large_valid_file():
    """A 10⁴-branch chain parses to what json.loads gives."""
    chain = dict(EXAMPLE, branches=[{"id": f"k{i}", "parent": None if i == 0 else f"k{i - 1}", "length": 1,
                                     "diameter": 1} for i in range(10_000)])
    text = json.dumps(chain)
    assert parse(text) == json.loads(text)


@settings(max_examples=300, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.data())
def test_any_damaged_file_is_a_value_or_one_line(data):
    """Cut, spliced and byte-flipped scenario files: a value, or one line with a place inside the
    text (line ≥ 1, column ≥ 1) — never another exception."""
    raw = bytearray(TEXT.encode())
    for _ in range(data.draw(st.integers(1, 4))):
        kind = data.draw(st.sampled_from(["cut", "flip", "insert", "delete"]))
        at = data.draw(st.integers(0, len(raw)))
        if kind == "cut":
            del raw[at:]
        elif kind == "flip" and at < len(raw):
            raw[at] = data.draw(st.integers(0, 255))
        elif kind == "insert":
            raw[at:at] = data.draw(st.sampled_from([b"[" * 200, b"9" * 500, b'"', b"\\", b"\xff", b"\xc3", b"{",
                                                    b"\\ud800", b'"membrane": 1,', b"\x00", b"\xef\xbb\xbf"]))
        elif kind == "delete":
            del raw[at:at + data.draw(st.integers(1, 20))]
    try:
        load_bytes(bytes(raw), "f.json")
    except JSONInputError as err:
        assert one_line(str(err)) and str(err).startswith("f.json: ")
        if err.line is not None:
            assert 1 <= err.line <= raw.count(b"\n") + 1 and err.column >= 1


# ------------------------------------------------------------------ the CLI, once wired
_WIRED = "jsonin" in Path(somaward.cli.__file__).read_text(encoding="utf-8")
needs_cli_wiring = pytest.mark.skipif(not _WIRED, reason="enable when cli.py reads its input through "
                                      "somaward.jsonin.load_path (issue 9)")


def _cli(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "somaward", *args], input=stdin, capture_output=True, timeout=120)


def _deep(depth):
    return "[" * depth + "]" * depth


_GOOD = TEXT.encode()
CLI_CASES = {
    "utf16_bom": b"\xff\xfe" + TEXT.encode("utf-16-le"),
    "invalid_utf8": _GOOD.replace(b'"trunk"', b'"tr\xe9nk"', 1),
    "binary_garbage": bytes(range(256)) * 4,
    "nested_1000": _deep(1000).encode(),
    "nested_in_notes": TEXT.replace('"soma"', f'"notes": {_deep(2000)}, "soma"').encode(),
    "digits_4301": TEXT.replace("20000", "1" * 4301).encode(),
    "rm_1e309": TEXT.replace("20000", "1" + "0" * 309).encode(),
    "unknown_key_newline": TEXT.replace('"soma"', '"a\\nb": 1, "soma"').encode(),
    "empty_key": TEXT.replace('"soma"', '"": 1, "soma"').encode(),
    "duplicate_key": TEXT.replace('"soma"', '"membrane": {}, "soma"').encode(),
    "half_surrogate": TEXT.replace('"trunk"', '"\\ud800"', 1).encode(),
    "nan": TEXT.replace("150", "NaN").encode(),
    "diameter_1e250": TEXT.replace("3.0", "1e250").encode(),
    "empty": b"",
}


@needs_cli_wiring
@pytest.mark.parametrize("via", ["file", "stdin"])
@pytest.mark.parametrize("case", sorted(CLI_CASES))
def test_cli_every_class_is_exit_2_and_one_line(case, via, tmp_path):
    """Issue 9: every hostile class through the CLI gives exit 2 and one stderr line."""
    data = CLI_CASES[case]
    if via == "file":
        path = tmp_path / "in.json"
        path.write_bytes(data)
        out = _cli("report", str(path))
    else:
        out = _cli("report", "-", stdin=data)
    err = out.stderr.decode("utf-8")
    assert out.returncode == 2, err
    assert err.endswith("\n") and one_line(err[:-1]) and err.startswith("somaward: error: "), err
    assert out.stdout == b""


@needs_cli_wiring
def test_cli_accepts_a_bom(tmp_path):
    path = tmp_path / "in.json"
    path.write_bytes(b"\xef\xbb\xbf" + _GOOD)
    for out in (_cli("report", str(path)), _cli("report", "-", stdin=b"\xef\xbb\xbf" + _GOOD)):
        assert out.returncode == 0, out.stderr
        assert json.loads(out.stdout)["scenario"]["membrane"]["Rm"] == 20000
