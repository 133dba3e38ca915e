"""Shared pieces of the page tests: the scenario the quick form stands for, report comparison,
the engine's reading-rounding and labels, and the page's own steps (wait for a result, type a
value)."""
from __future__ import annotations

import html
import json
import math
import re

from somaward import quantities

BOOT_TIMEOUT_MS = 120_000


def quick_scenario(distance, length, diameter, soma_diameter, end, Rm, Ri, Cm,
                   eq_tolerance=None) -> dict:
    """The scenario the quick-cable form stands for (DEVELOPERS.md, 'The scenario'): only what
    the form holds, every other value the engine's default (the page sends no frequencies);
    ``eq_tolerance``: the equivalent-cylinder section's tolerance field, when it is filled."""
    scenario = {
        "membrane": {"Rm": Rm, "Ri": Ri, "Cm": Cm},
        "soma": None if soma_diameter is None else {"diameter": soma_diameter},
        "branches": [{"id": "dendrite", "parent": None, "length": length,
                      "diameter": diameter, "end": end}],
        "synapse": {"path": "dendrite", "path_distance": distance},
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
        return [d for i, (x, y) in enumerate(zip(a, b, strict=True))
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
    """The report value a displayed number stands for (the data-key of its element: dotted
    names, [i] list indices; a per-branch entry such as lambda_um.<id> by its branch id)."""
    for head in ("lambda_um", "electrotonic_length", "terminal_electrotonic_distance", "cylinders"):
        if key.startswith(head + "."):
            rest = key[len(head) + 1:]
            for bid in sorted(report[head], key=len, reverse=True):
                if rest == bid or rest.startswith(bid + "["):
                    return lookup(report[head][bid], rest[len(bid):])
    return lookup(report, key)


def lookup(value, key: str):
    """The value at a dotted path with [i] list indices."""
    for name, index in re.findall(r"([^.\[\]]+)|\[(\d+)\]", key):
        value = value[int(index)] if index else value[name]
    return value


def defined_key(key: str) -> str:
    """The report path whose quantity defines ``key``: itself, or for an item of a list of
    values (d_child of one child) the list."""
    while True:
        try:
            quantities.quantity(key)
            return key
        except KeyError:
            if not re.search(r"\[\d+\]$", key):
                raise
            key = re.sub(r"\[\d+\]$", "", key)


def shown(value, key: str) -> str:
    """A report value as the engine writes it rounded for reading (quantities.format_value)."""
    return quantities.format_value(value, defined_key(key))


def html_text(markup: str) -> str:
    """The text an HTML label shows (its <sub>/<sup> flattened)."""
    return html.unescape(re.sub(r"<[^>]+>", "", markup))


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
