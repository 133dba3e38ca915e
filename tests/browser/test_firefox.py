"""The page in Firefox ESR (issue 10): Debian's firefox-esr, headless, driven through Marionette.

Lab PCs often run Firefox. These tests drive the same built folder as the Chromium tests:
the page reaches ready under its Content-Security-Policy, computes the one-dendrite case with
the same numbers as Chromium (1e-12 relative: two browsers, one Pyodide build), shows a bad
value's message while keeping the last result, reopens its own permalink, and hands the paper
texts to the copy. Physics is not checked here (the engine tests do that, with their sources);
the comparisons are with CPython's ``somaward`` on the page's own report — source: derived, the
page holds no physics. Screenshots of each state go to test-artifacts/firefox-*.png.
"""
from __future__ import annotations

import json

import pytest

import somaward
from firefox import Firefox
from helpers import differences, open_page, quick_scenario, shown_report
from somaward import export

pytestmark = pytest.mark.browser

RESULT = """
const b = document.body.dataset;
if (b.state === "error") return "error";
if (b.input === "invalid") return "invalid";
return b.results === "fresh" && b.input === "valid" && b.views === "drawn" ? "fresh" : "";
"""
REPORT = 'return document.getElementById("report-json").textContent;'


@pytest.fixture(scope="module")
def firefox():
    pytest.importorskip("marionette_driver", reason="run `bash scripts/install-browser.sh`")
    ff = Firefox()
    yield ff
    ff.close()


def open_ready(ff: Firefox, url: str, fresh: bool = True) -> dict:
    """Open the page and wait for its first result; ``fresh``: with no autosaved work (another
    test's inputs would otherwise come back)."""
    if fresh:
        ff.m.navigate(url.split("#")[0] + "favicon.svg")       # same origin, no page script
        ff.js("localStorage.clear();")
    ff.m.navigate(url)
    state = ff.wait(RESULT, timeout=120, what="the first result")
    if state != "fresh":
        said = ff.js('return [document.getElementById("boot-error-text")?.textContent, '
                     'document.getElementById("status").textContent].join(" | ")')
        raise AssertionError(f"no result in Firefox ({state}): {said}")
    return json.loads(ff.js(REPORT))


def type_and_enter(ff: Firefox, field_id: str, text: str) -> None:
    """Type into a field and press Enter, as a person would (Marionette's real key events)."""
    from marionette_driver.keys import Keys

    el = ff.m.find_element("css selector", f"#{field_id}")
    el.clear()
    el.send_keys(text + Keys.ENTER)


def test_ready_under_csp_and_same_numbers_as_chromium(firefox, page, served, artifacts):
    ff = firefox
    report = open_ready(ff, served.url)
    # The page's Content-Security-Policy is in force (a meta tag), and Python started under it.
    csp = ff.js('return document.querySelector("meta[http-equiv=Content-Security-Policy]")?.content || ""')
    assert "script-src 'self' 'wasm-unsafe-eval'" in csp
    assert ff.js("return document.body.dataset.state") == "ready"
    ff.screenshot(artifacts / "firefox-ready.png")

    # The one-dendrite case, computed by Chromium from the same folder.
    open_page(page, served.url)
    chromium = shown_report(page)
    assert report["scenario"] == chromium["scenario"]
    assert differences(report, chromium) == []
    # ... and by CPython, from the scenario the page sent.
    expected = json.loads(json.dumps(somaward.solve(quick_scenario(
        distance=300, length=600, diameter=2, soma_diameter=20, end="sealed", Rm=20000, Ri=150, Cm=1))))
    assert report["stamp"]["fingerprint"] == expected["stamp"]["fingerprint"]
    assert differences(report, expected) == []
    # The headline and the tables show the numbers of this report.
    shown = ff.js('return [...document.querySelectorAll("#results-body [data-key]")]'
                  '.map((e) => [e.dataset.key, e.dataset.value]).filter((p) => p[1] !== undefined)')
    assert len(shown) >= 10
    assert ff.js('return document.getElementById("results-summary").textContent').strip()


def test_bad_value_shows_its_message_and_keeps_the_last_result(firefox, served, artifacts):
    ff = firefox
    good = open_ready(ff, served.url)
    before = ff.js('return document.getElementById("results-body").innerText')
    type_and_enter(ff, "f-diameter", "-1")
    ff.wait('return document.getElementById("f-diameter-msg").textContent', timeout=30, what="the message")
    bad = quick_scenario(distance=300, length=600, diameter=-1, soma_diameter=20, end="sealed",
                         Rm=20000, Ri=150, Cm=1)
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve(bad)
    assert ff.js('return document.getElementById("f-diameter-msg").textContent') == err.value.plain
    assert ff.js('return document.getElementById("f-diameter").getAttribute("aria-invalid")') == "true"
    assert ff.js("return document.body.dataset.results") == "stale"
    assert ff.js('return document.getElementById("results-body").innerText') == before
    assert json.loads(ff.js(REPORT)) == good
    ff.screenshot(artifacts / "firefox-bad-value.png")
    type_and_enter(ff, "f-diameter", "2")
    assert ff.wait(RESULT, timeout=60, what="a result again") == "fresh"
    assert ff.js('return document.getElementById("f-diameter-msg").textContent') == ""


def test_permalink_round_trip(firefox, served, artifacts):
    ff = firefox
    open_ready(ff, served.url)
    type_and_enter(ff, "f-Rm", "31000")
    assert ff.wait(RESULT, timeout=60) == "fresh"
    changed = json.loads(ff.js(REPORT))
    assert changed["scenario"]["membrane"]["Rm"] == 31000
    ff.m.find_element("css selector", "#copy-link").click()
    ff.wait('return location.hash.startsWith("#s1.") && document.getElementById("keep-status").textContent'
            '.includes("characters")', timeout=30, what="the link")
    link = ff.js("return location.href")
    # A fresh page (no autosave) opened at the link shows the same inputs and the same report.
    reopened = open_ready(ff, link)
    assert ff.js('return document.getElementById("f-Rm").value') == "31000"
    assert reopened["stamp"]["fingerprint"] == changed["stamp"]["fingerprint"]
    assert differences(reopened, changed) == []
    ff.screenshot(artifacts / "firefox-permalink.png")


def test_paper_block_is_handed_to_the_copy(firefox, served, artifacts):
    """Headless Firefox cannot read the clipboard back, so the test records the text the page
    hands to navigator.clipboard.writeText (or selects in its fallback box) and compares it with
    what CPython's exports make of the page's own report."""
    ff = firefox
    open_ready(ff, served.url)
    report_text = ff.js(REPORT)
    ff.wait('return !document.querySelector("#paper button[data-copy]").disabled', timeout=60,
            what="the paper texts")
    ff.js("""
      window.__handed = [];
      if (navigator.clipboard) {
        const real = navigator.clipboard.writeText.bind(navigator.clipboard);
        navigator.clipboard.writeText = (text) => { window.__handed.push(text); return real(text); };
      }
    """)
    expected_report = json.loads(report_text)
    for selector, expected in (
            ('#paper button[data-copy="methods"]', export.methods_text(expected_report)),
            ('#paper button[data-copy="table"][data-fmt="tsv"]', export.table(expected_report, "tsv"))):
        ff.js("window.__handed = window.__handed || []; window.__handed.length = 0;")
        ff.m.find_element("css selector", selector).click()
        got = ff.wait("""
          if (window.__handed && window.__handed.length) return window.__handed[window.__handed.length - 1];
          const box = document.getElementById("copy-fallback");
          if (box && !box.hidden) {
            const area = document.getElementById("copy-fallback-text");
            return area.value.substring(area.selectionStart, area.selectionEnd);
          }
          return "";
        """, timeout=30, what="the copied text")
        assert got == expected
        assert ff.js('return document.getElementById("paper-copied").textContent').strip()
    ff.screenshot(artifacts / "firefox-paper-copied.png")
