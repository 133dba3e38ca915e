"""The page's bridge (site_src/py/somaward_page.py) in CPython, without a browser: every answer it
gives the page is one line, an engine InternalError becomes a plain sentence asking the person to
report it with the fingerprint, any other exception the plain FAULT sentence (never its text), and
read_input refuses what the page cannot take in plain words. Source: derived (issue 9: no
traceback on the page, one line per message)."""
from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

import somaward

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "site_src" / "py"))
import somaward_page as bridge  # the page's bridge module, not an installed package


def answer(fn, *args):
    ok, payload = bridge.call(fn, json.dumps(list(args)))
    return ok, json.loads(payload)


def chain(n: int) -> dict:
    branches = [{"id": "c0", "parent": None, "length": 20, "diameter": 2.0}]
    branches += [{"id": f"c{i}", "parent": f"c{i - 1}", "length": 20, "diameter": 2.0} for i in range(1, n)]
    return {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
            "branches": branches, "synapse": {"branch": f"c{n - 1}", "distance": 10}}


def one_line_each(error: dict):
    for key in ("type", "message", "plain"):
        assert isinstance(error[key], str) and error[key] and "\n" not in error[key], (key, error)


@pytest.fixture
def extra(monkeypatch):
    """Add a function to the bridge's map for one test."""
    def add(name, fn):
        monkeypatch.setitem(bridge.FUNCTIONS, name, fn)
    return add


def test_internal_error_is_a_sentence_asking_for_a_report(extra):
    def guard(*_):
        raise somaward.InternalError("a NaN at tree_map.site_to_soma[7]", "0123456789ab")
    extra("guarded", guard)
    ok, err = answer("guarded")
    assert not ok and err["type"] == "InternalError"
    one_line_each(err)
    assert "report it" in err["plain"] and "fingerprint 0123456789ab" in err["plain"]
    assert "NaN" not in err["plain"] and "tree_map" not in err["plain"]    # the details go to the console
    assert "tree_map.site_to_soma[7]" in err["message"]


@pytest.mark.parametrize("exc", [ValueError("first line\nsecond line\n  File \"x.py\", line 1"),
                                 RecursionError("maximum recursion depth exceeded"), MemoryError(), KeyError("k")])
def test_any_other_exception_is_the_fault_sentence_and_one_line(extra, exc):
    exc.add_note("a note that format_exception_only would print last")

    def broken(*_):
        raise exc
    extra("broken", broken)
    ok, err = answer("broken")
    assert not ok and err["type"] == "InternalError" and err["plain"] == bridge.FAULT
    one_line_each(err)
    assert err["message"].startswith(type(exc).__name__) and "note" not in err["message"]


def test_read_input_holds_the_table_limit_before_validating():
    ok, err = answer("read_input", json.dumps(chain(12)), "twelve.json", "file", 10)
    assert not ok and err["type"] == "TooLarge"
    one_line_each(err)
    assert "12 branches" in err["plain"] and "at most 10" in err["plain"]
    assert "somaward report twelve.json" in err["plain"]
    # A link has no file name: the page offers its scenario as a file.
    bad = {**chain(12), "membrane": {"Rm": -1}}        # not validated: the count comes first
    ok, err = answer("read_input", json.dumps({"mode": "tree", "scenario": bad}), "the link", "link", 10)
    assert err["type"] == "TooLarge" and "Save that cell's scenario as JSON" in err["plain"]
    ok, value = answer("read_input", json.dumps(chain(10)), "ten.json", "file", 10)
    assert ok and value["scenario"] == chain(10) and value["mode"] == "tree" and value["warnings"] == []


@pytest.mark.parametrize("text, words", [
    ('{"mode": "tree", ', "not valid JSON"),
    ("[" * 100 + "]" * 100, "nested more than"),
    ('{"mode": "tree", "mode": "quick", "scenario": {}}', "appears twice"),
    ('{"mode": "sideways", "scenario": {}}', "does not hold a Somaward input"),
    ('{"mode": "tree", "scenario": [1]}', "does not hold a Somaward input"),
])
def test_read_input_refuses_a_link_in_its_own_words(text, words):
    ok, err = answer("read_input", text, "the link", "link", 5000)
    assert not ok and err["type"] == "Refused" and words in err["plain"], err
    one_line_each(err)
    assert "file" not in err["plain"]


def test_read_input_takes_a_bom_and_renames_old_keys():
    old = chain(2)
    old["branches"][1]["sections"] = [{"length": 10, "diameter": 1}]
    del old["branches"][1]["length"], old["branches"][1]["diameter"]
    ok, value = answer("read_input", "\ufeff" + json.dumps(old), "old.json", "file", 5000)
    assert ok and "cylinders" in value["scenario"]["branches"][1] and len(value["warnings"]) == 1
    bad = {**chain(2), "membrane": {"Rm": -1, "Ri": 150}}
    ok, err = answer("read_input", json.dumps(bad), "bad.json", "file", 5000)
    assert err["type"] == "ScenarioError" and err["path"] == "membrane.Rm"
    one_line_each(err)
