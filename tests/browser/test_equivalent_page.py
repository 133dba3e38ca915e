"""The page's equivalent-cylinder section (issue 5) in headless Chromium.

Physics is not checked here (tests/test_equivalent.py does that, with its sources): these tests
check that the section shows exactly what CPython's ``somaward.solve`` puts under
``report["equivalent_cylinder"]``, rounded for reading — source: derived, the page holds no
physics. The demo tree is invented (engine/somaward/demo/invented_pyramid.json says so).
Screenshots go to test-artifacts/.
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest

import somaward
from helpers import (differences, lookup, open_page, quick_scenario, shown, shown_report, submit,
                     wait_result)

pytestmark = pytest.mark.browser

DEMO = Path(somaward.__file__).parent / "demo" / "invented_pyramid.json"
SECTION = "#equivalent-body"


def cpython(scenario: dict) -> dict:
    """CPython's report, through JSON as the page's is."""
    return json.loads(json.dumps(somaward.solve(scenario)))


def check_numbers(page, expected: dict, at_least: int) -> int:
    """Every number in the section is the CPython value rounded as the engine rounds it (a
    percentage × 100), with the full value kept."""
    buttons = page.locator(f"{SECTION} .num")
    count = buttons.count()
    assert count >= at_least
    for i in range(count):
        b = buttons.nth(i)
        key, text = b.get_attribute("data-key"), b.text_content()
        assert key.startswith(("equivalent_cylinder.", "tree_map.")), key
        value = lookup(expected, key)
        assert text == shown(value, key), f"{key}: shown {text!r}, value {value!r}"
        if value is None:
            assert b.get_attribute("data-value") == "—"
        else:
            assert float(b.get_attribute("data-value")) == pytest.approx(value, rel=1e-12, abs=1e-12)
    return count


def use_quick_cable(page):
    """Pick the quick-cable input where the page offers a choice of input."""
    if page.locator("input[name=mode][value=quick]").count() and \
            not page.is_checked("input[name=mode][value=quick]"):
        page.check("input[name=mode][value=quick]")
        wait_result(page)


def test_default_input_shows_verdict_and_table(page, served, artifacts):
    open_page(page, served.url)
    page.wait_for_selector("#eq-verdict", timeout=30_000)
    report = shown_report(page)
    expected = cpython(report["scenario"])
    eq = expected["equivalent_cylinder"]
    assert differences(report["equivalent_cylinder"], eq) == []

    verdict = page.locator("#eq-verdict")
    assert verdict.get_attribute("data-verdict") == ("met" if eq["meets_conditions"] else "not-met")
    head = page.text_content("#eq-verdict .eq-verdict-head")
    assert ("✓ yes" if eq["meets_conditions"] else "✗ no") in head and "5 %" in head
    # One line per condition, each with its word (not colour alone).
    for key, ok in eq["conditions"].items():
        if key == "equal_terminal_electrotonic_distance_required":
            continue
        li = page.locator(f"#eq-verdict li[data-condition={key}]")
        assert li.get_attribute("data-ok") == str(ok).lower()
        assert li.locator(".eq-mark").text_content() == ("✓ met" if ok else "✗ broken")

    # The 3/2-rule table is there, one row per branch point (or the line saying there are none).
    rows = page.locator("#eq-branch-points tbody tr")
    if eq["branch_points"]:
        assert rows.count() == len(eq["branch_points"])
    else:
        assert rows.count() == 1 and rows.first.text_content() == "—"
    assert page.locator("#eq-branch-points caption").text_content().startswith("3/2 power rule")
    assert page.locator("#eq-terminals tbody tr").count() == len(eq["terminals"])
    assert page.locator("#eq-comparison tbody tr").count() == 10  # X, then 3 quantities × tree, cylinder, error
    assert page.locator("#eq-plot svg").count() >= 1
    check_numbers(page, expected, at_least=20)
    page.locator("#equivalent").screenshot(path=artifacts / "equivalent-default-1280.png")
    assert page.log.errors == []


def test_quick_cable_comparison_equals_cpython_rounded(page, served, artifacts):
    open_page(page, served.url)
    use_quick_cable(page)
    for name, text in {"distance": "420", "length": "700", "diameter": "1.6", "soma_diameter": "14",
                       "Rm": "18000", "Ri": "120", "Cm": "0.9"}.items():
        page.fill(f"#f-{name}", text)
    page.check("input[name=end][value=killed]")
    submit(page, "f-Cm")
    wait_result(page)
    expected = cpython(quick_scenario(distance=420, length=700, diameter=1.6, soma_diameter=14,
                                      end="killed", Rm=18000, Ri=120, Cm=0.9))
    report = shown_report(page)
    assert differences(report["equivalent_cylinder"], expected["equivalent_cylinder"]) == []

    cmp_ = expected["equivalent_cylinder"]["comparison"]
    for quantity in ("soma_to_site", "transfer_resistance_Mohm", "soma_input_resistance_Mohm"):
        for column in ("tree", "cylinder", "relative_error"):
            key = f"equivalent_cylinder.comparison.{quantity}.{column}"
            text = page.text_content(f"#eq-comparison .num[data-key='{key}']")
            assert text == shown(cmp_[quantity][column], key), f"{key}: {text!r}"
        key = f"equivalent_cylinder.comparison.{quantity}.relative_error"
        unit = page.text_content(f"#eq-comparison [data-unit-for='{key}']")
        assert unit == "%"
    for key, value in (("site_to_soma", cmp_["not_given_by_cylinder"]["site_to_soma"]),
                       ("site_input_resistance_Mohm", cmp_["not_given_by_cylinder"]["site_input_resistance_Mohm"])):
        full = f"equivalent_cylinder.comparison.not_given_by_cylinder.{key}"
        text = page.text_content(f"#eq-not-given .num[data-key='{full}']")
        assert text == shown(value, full), f"{key}: {text!r}"
    assert "does not give" in page.text_content("#eq-not-given")
    assert page.locator("#eq-beyond").count() == (1 if cmp_["site_beyond_cylinder"] else 0)
    check_numbers(page, expected, at_least=20)

    # A click (and Enter) shows the full value, a second one the rounded value again.
    b = page.locator("#eq-comparison .num[data-key='equivalent_cylinder.comparison.transfer_resistance_Mohm.tree']")
    b.click()
    assert b.text_content() == b.get_attribute("data-full")
    b.press("Enter")
    assert b.text_content() == b.get_attribute("data-rounded")
    page.locator("#equivalent").screenshot(path=artifacts / "equivalent-quick-cable-1280.png")
    assert page.log.errors == []


def test_tolerance_field_goes_into_the_scenario(page, served):
    open_page(page, served.url)
    page.wait_for_selector("#eq-verdict", timeout=30_000)
    page.fill("#eq-tolerance", "0.2")
    page.press("#eq-tolerance", "Enter")
    wait_result(page)
    report = shown_report(page)
    assert report["scenario"]["equivalent_cylinder"] == {"tolerance": 0.2}
    # Pyodide's numpy and CPython's differ in the last digits: compare to 1e-12 relative.
    assert differences(report["equivalent_cylinder"], cpython(report["scenario"])["equivalent_cylinder"]) == []
    assert "20 %" in page.text_content("#eq-verdict .eq-verdict-head")
    assert page.text_content("#eq-tolerance-used") == "in use: 20 %"

    # Out of range: the engine's own message, beside the field; the old result stays, marked stale.
    page.fill("#eq-tolerance", "1.5")
    page.press("#eq-tolerance", "Enter")
    page.wait_for_selector("#eq-tolerance-msg:not(:empty)", timeout=30_000)
    bad = dict(report["scenario"], equivalent_cylinder={"tolerance": 1.5})
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve(bad)
    assert page.text_content("#eq-tolerance-msg") == err.value.plain
    assert page.get_attribute("#eq-tolerance", "aria-invalid") == "true"
    assert page.get_attribute("body", "data-results") == "stale"
    # Empty: the engine's default again, and the message goes.
    page.fill("#eq-tolerance", "")
    page.press("#eq-tolerance", "Enter")
    wait_result(page)
    assert shown_report(page)["equivalent_cylinder"]["tolerance"] == 0.05
    assert page.text_content("#eq-tolerance-msg") == ""
    assert page.get_attribute("#eq-tolerance", "aria-invalid") is None
    assert page.log.errors == []


def wait_for_tree_report(page, tries=300):
    """After switching to the branch table: wait (not a timing check) for its first result."""
    for _ in range(tries):
        if page.get_attribute("body", "data-input") == "valid" and \
                page.get_attribute("body", "data-results") == "fresh" and \
                len(shown_report(page)["scenario"]["branches"]) > 1:
            return shown_report(page)
        if page.get_attribute("body", "data-input") == "invalid":
            wait_result(page)  # raises with the page's words
        page.wait_for_timeout(200)
    raise AssertionError("the branch table gave no result")


def demo_report_on_page(page) -> dict:
    """The invented demo tree on the page: through the branch table where the page has one,
    otherwise CPython's demo report drawn by the page's own view module."""
    if page.locator("input[name=mode][value=tree]").count():
        page.check("input[name=mode][value=tree]")
        return wait_for_tree_report(page)
    report = cpython(json.loads(DEMO.read_text()))
    page.evaluate("""async (report) => {
        const view = await import("./js/equivalent.js");
        view.renderEquivalent(document.querySelector("#equivalent-body"), report);
    }""", report)
    return report


def test_failing_branch_point_is_marked(page, served, artifacts):
    open_page(page, served.url)
    page.wait_for_selector("#eq-verdict", timeout=30_000)
    report = demo_report_on_page(page)
    expected = cpython(report["scenario"])
    eq = expected["equivalent_cylinder"]
    assert differences(report["equivalent_cylinder"], eq) == []
    failing = [r["parent"] for r in eq["branch_points"] if not r["ok"]]
    assert failing, "the demo tree should break the 3/2 rule somewhere"
    assert page.get_attribute("#eq-verdict", "data-verdict") == "not-met"
    assert page.locator("#eq-messages li").all_text_contents() == eq["messages"]

    rows = page.locator("#eq-branch-points tbody tr")
    assert rows.count() == len(eq["branch_points"])
    for i, point in enumerate(eq["branch_points"]):
        row = rows.nth(i)
        assert row.locator("th").text_content() == point["parent"]
        assert row.get_attribute("data-ok") == str(point["ok"]).lower()
        last = row.locator("td").last.text_content()
        # Marked by a word and a sign, not by colour alone.
        assert last == ("✓ yes" if point["ok"] else "✗ no")
        assert ("eq-fail" in (row.get_attribute("class") or "")) == (not point["ok"])
    joins = page.locator("#eq-cylinder-joins tbody tr[data-ok=false]")
    assert joins.count() == sum(not r["ok"] for r in eq["cylinder_joins"])
    terms = page.locator("#eq-terminals tbody tr[data-ok=false]")
    assert terms.locator("th").all_text_contents() == eq["breaks"]["terminals"]
    # The plot draws one line per branch of the map and the cylinder's curve.
    lines = page.locator("#eq-plot svg [aria-label=line] path")
    assert lines.count() >= len(set(expected["tree_map"]["branch"])) + 1
    check_numbers(page, expected, at_least=40)
    page.locator("#equivalent").screenshot(path=artifacts / "equivalent-demo-tree-1280.png")

    if len(report["scenario"]["branches"]) > 1 and page.locator("input[name=mode][value=tree]").count():
        # Through the page's own input: a looser tolerance, above the worst branch point's
        # departure, clears the marks there (the diameter steps of the taper stay marked when
        # they depart more).
        worst = max(abs(r["departure"]) for r in eq["branch_points"])
        loose = round(worst + 0.05, 2)
        page.fill("#eq-tolerance", str(loose))
        page.press("#eq-tolerance", "Enter")
        wait_result(page)
        looser = cpython(shown_report(page)["scenario"])["equivalent_cylinder"]
        assert looser["tolerance"] == loose
        assert page.locator("#eq-branch-points tbody tr[data-ok=false]").count() == 0
        assert page.locator("#eq-cylinder-joins tbody tr[data-ok=false]").count() == \
            sum(abs(r["departure"]) > loose for r in eq["cylinder_joins"])
        assert page.get_attribute("#eq-verdict", "data-verdict") == \
            ("met" if looser["meets_conditions"] else "not-met")
        check_numbers(page, cpython(shown_report(page)["scenario"]), at_least=40)
    assert page.log.errors == []


def test_tablet_width_and_keyboard(browser, served, artifacts):
    context = browser.new_context(viewport={"width": 768, "height": 1024})
    page = context.new_page()
    try:
        open_page(page, served.url)
        page.wait_for_selector("#eq-verdict", timeout=30_000)
        assert page.evaluate("() => document.documentElement.scrollWidth") <= 768
        page.focus("#eq-tolerance")
        page.keyboard.press("Tab")  # from the field on to the section's first number
        focused = page.evaluate("() => document.activeElement.closest('#equivalent') !== null")
        assert focused
        num = page.locator(f"{SECTION} .num").first
        num.focus()
        page.keyboard.press("Enter")
        assert num.text_content() == num.get_attribute("data-full")
        page.locator("#equivalent").screenshot(path=artifacts / "equivalent-tablet-768.png")
    finally:
        context.close()
