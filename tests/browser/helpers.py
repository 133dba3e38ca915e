"""Shared pieces of the page tests: the page's fixed request extras, report comparison,
the reading-rounding rule, and the page's own steps (wait for a result, type a value)."""
from __future__ import annotations

import json
import math

# The frequencies the page asks for (site_src/js/quick-cable.js, FREQUENCIES_HZ).
FREQUENCIES_HZ = [
    0.1, 0.15, 0.2, 0.3, 0.5, 0.7,
    1, 1.5, 2, 3, 5, 7,
    10, 15, 20, 30, 50, 70,
    100, 150, 200, 300, 500, 700,
    1000,
]

BOOT_TIMEOUT_MS = 120_000


def quick_scenario(distance, length, diameter, soma_diameter, end, Rm, Ri, Cm,
                   eq_tolerance=None) -> dict:
    """The scenario the quick-cable form stands for (DEVELOPERS.md, 'The scenario');
    ``eq_tolerance``: the equivalent-cylinder section's tolerance field, when it is filled."""
    scenario = {
        "membrane": {"Rm": Rm, "Ri": Ri, "Cm": Cm},
        "soma": None if soma_diameter is None else {"diameter": soma_diameter},
        "branches": [{"id": "dendrite", "parent": None, "length": length,
                      "diameter": diameter, "end": end}],
        "synapse": {"branch": "dendrite", "distance": distance},
        "frequencies_hz": FREQUENCIES_HZ,
    }
    if eq_tolerance is not None:
        scenario["equivalent_cylinder"] = {"tolerance": eq_tolerance}
    return scenario


def page_eq_tolerance(page):
    """The equivalent-cylinder tolerance the page will send (its field), or None."""
    field = page.locator("#eq-tolerance")
    if field.count() == 0 or not field.input_value().strip():
        return None
    return float(field.input_value())


def differences(a, b, path="report", rel=1e-12, abs_tol=1e-12) -> list[str]:
    """Every place where two JSON values differ (numbers: beyond rel/abs tolerance)."""
    if isinstance(a, bool) or isinstance(b, bool) or a is None or b is None or isinstance(a, str):
        return [] if a == b else [f"{path}: {a!r} != {b!r}"]
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        ok = math.isclose(a, b, rel_tol=rel, abs_tol=abs_tol)
        return [] if ok else [f"{path}: {a!r} != {b!r}"]
    if isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            return [f"{path}: keys {sorted(set(a) ^ set(b))} in one only"]
        return [d for k in a for d in differences(a[k], b[k], f"{path}.{k}", rel, abs_tol)]
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [f"{path}: length {len(a)} != {len(b)}"]
        return [d for i, (x, y) in enumerate(zip(a, b))
                for d in differences(x, y, f"{path}[{i}]", rel, abs_tol)]
    return [f"{path}: {type(a).__name__} != {type(b).__name__}"]


def rounded_ok(text: str, value: float, digits: int = 3) -> bool:
    """Is ``text`` ``value`` rounded to ``digits`` significant digits (half a unit in the
    last place, as site_src/js/format.js rounds)?"""
    if value is None:
        return text == "—"
    shown = float(text)
    if value == 0:
        return shown == 0
    unit = 10 ** (math.floor(math.log10(abs(value))) - digits + 1)
    return abs(shown - value) <= 0.5 * unit * (1 + 1e-9)


def report_value(report: dict, key: str):
    """The report value a displayed number stands for (data-key of a .num button)."""
    if key in ("lambda_um", "electrotonic_length"):
        v = report[key]["dendrite"]
        return v[0] if isinstance(v, list) else v
    value = report
    for part in key.split("."):
        value = value[part]
    return value


def wait_result(page, timeout=BOOT_TIMEOUT_MS):
    """Wait for the newest request's answer; fail at once, with the page's words, on an error."""
    page.wait_for_selector("body[data-results=fresh][data-input=valid], body[data-input=invalid], "
                           "body[data-state=error]", state="attached", timeout=timeout)
    if page.get_attribute("body", "data-input") != "valid":
        said = [page.text_content(s) for s in ("#form-message", "#boot-error-text")]
        said += page.locator(".field-msg:not(:empty)").all_text_contents()
        raise AssertionError(f"no result; the page says: {' | '.join(t for t in said if t)}")
    # Off-screen views (plots, equivalent cylinder, tree map) are drawn when the page is idle.
    page.wait_for_selector("body[data-views=drawn]", state="attached", timeout=timeout)


def open_page(page, url):
    page.goto(url)
    wait_result(page)


def shown_report(page) -> dict:
    return json.loads(page.locator("#report-json").text_content())


def submit(page, field_id: str):
    """Press Enter in a field: the form recomputes at once, without the debounce."""
    page.press(f"#{field_id}", "Enter")
