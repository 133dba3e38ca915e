"""The vocabulary (issue 8): every reported quantity is defined once, in ``somaward.quantities``,
and the scenario's input fields are labelled once, in the schema.

Common practice, no source: these are contract tests of the engine's words, not physics. The
scenarios are invented (the bundled demo cell, and small trees written here).
"""

import json
import re
from importlib import resources

import pytest

import somaward
from somaward import quantities as q
from somaward.schema_check import load_schema, schema_fields

DEMO = json.loads(resources.files("somaward").joinpath("demo", "invented_pyramid.json").read_text("utf-8"))
NO_SOMA = {"membrane": {"Rm": 20000, "Ri": 150}, "soma": None,
           "branches": [{"id": "stem", "parent": None, "length": 200, "diameter": 2},
                        {"id": "left", "parent": "stem", "cylinders": [{"length": 100, "diameter": 1.5},
                                                                      {"length": 100, "diameter": 1}]},
                        {"id": "right", "parent": "stem", "length": 150, "diameter": 1, "end": "killed"}],
           "synapse": {"path": "left", "path_distance": 320}}
ONE = {"membrane": {"Rm": 20000, "Ri": 150}, "soma": {"diameter": 20},
       "branches": [{"id": "d", "parent": None, "length": 600, "diameter": 2, "end": {"G": 1, "C": 2}}],
       "synapse": {"branch": "d", "distance": 300}}
NOT_QUANTITIES = {"scenario", "warnings", "defaults_applied"}     # the input, and sentences


def leaves(value, path=""):
    """Report paths of every value that is not an object or a list of objects."""
    if isinstance(value, dict):
        for k, v in value.items():
            if not path and k in NOT_QUANTITIES:
                continue
            yield from leaves(v, f"{path}.{k}" if path else k)
    elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
        for i, v in enumerate(value):
            yield from leaves(v, f"{path}[{i}]")
    else:
        yield path


@pytest.fixture(scope="module", params=["demo", "no_soma", "one_cylinder"])
def report(request):
    return somaward.solve({"demo": DEMO, "no_soma": NO_SOMA, "one_cylinder": ONE}[request.param])


def test_every_report_value_has_a_definition(report):
    missing = []
    for path in leaves(report):
        try:
            q.quantity(path)
        except KeyError:
            missing.append(path)
    assert missing == []


def test_every_definition_is_used_by_some_report():
    """No dead definitions: each key names a value of at least one of the three reports."""
    used = set()
    for sc in (DEMO, NO_SOMA, ONE):
        for path in leaves(somaward.solve(sc)):
            used.add(q.quantity(path).key)
            while re.search(r"[.\[]", path):                # and the groups that hold it (table titles)
                path = re.sub(r"(\[\d+\]|\.[^.\[]*)$", "", path)
                try:
                    used.add(q.quantity(path).key)
                except KeyError:
                    pass
    assert sorted(set(q.QUANTITIES) - used) == []


@pytest.mark.parametrize("key", sorted(q.QUANTITIES))
def test_each_definition_is_complete(key):
    d = q.QUANTITIES[key]
    assert d.label and d.label == d.label.strip()
    assert d.definition.endswith(".") and "\n" not in d.definition
    assert 1 <= d.digits <= 17
    assert not d.percent or d.unit == "%"
    for form in ("plain", "html", "latex"):
        for rec in q.RECORDING_SITES:
            text = q.render_markup(d.label, form, rec, item="b1")
            assert "{rec}" not in text and "_[" not in text and "^[" not in text


def test_without_a_soma_no_label_names_a_soma():
    """Without a soma the recording site is the root: no label of a value the report holds says soma."""
    report = somaward.solve(NO_SOMA)
    assert report["recording_site"] == "root"
    for path in leaves(report):
        if path.split(".")[0] in ("soma", "rho", "rho_inf", "recording_site"):   # null, or says both
            continue
        words = q.label(path, "root") + " " + q.definition(path, "root")
        assert not re.search(r"\bsoma\b", words.lower()), (path, words)


def test_voltage_ratios_are_written_with_their_two_sites():
    for key, d in q.QUANTITIES.items():
        assert "V_out" not in d.label and "V_in" not in d.label and "V_site" not in d.label, key
    assert q.label("attenuation.steady_state.site_to_soma") == "Voltage ratio V_soma/V_syn, synapse → soma"
    assert q.label("attenuation.steady_state.soma_to_site_fold", "root") == \
        "Attenuation factor V_root/V_syn, root → synapse"
    assert q.label("tree_map.site_to_soma") == "Voltage ratio V_soma/V_point, point → soma"


def test_tables_name_defined_keys_and_rows_follow_the_report():
    for table in q.TABLES.values():
        for key in table["keys"]:
            assert key in q.QUANTITIES
    report = somaward.solve(DEMO)
    rows = q.table_rows(report, "branches")
    assert [r[0] for r in rows[:len(DEMO["branches"])]] == [f"lambda_um.{b['id']}" for b in DEMO["branches"]]
    assert rows[0][1] == f"Space constant λ of branch {DEMO['branches'][0]['id']}"
    no_rho = [r[0] for r in q.table_rows(somaward.solve(NO_SOMA), "constants")]
    assert "rho" not in no_rho and "transfer_resistance_Mohm" in no_rho


def test_format_value_uses_the_precision_and_percent():
    assert q.format_value(0.123456, "attenuation.steady_state.site_to_soma") == "0.1235"
    assert q.format_value(-0.33012, "equivalent_cylinder.comparison.soma_to_site.relative_error") == "-33"
    assert q.format_value(True) == "yes" and q.format_value(None) == "—"
    assert q.format_value(1.5e-7, "tau_m_ms") == "1.5e-7"


def test_every_input_field_has_a_label_and_its_unit():
    """Every number the schema accepts with a unit has a label (the page's form takes both)."""
    fields = schema_fields()
    text = json.dumps(load_schema())
    assert text.count('"x-unit"') > 10
    for path in ("membrane.Rm", "membrane.Ri", "membrane.Cm", "soma.diameter", "branches[].length",
                 "branches[].cylinders[].diameter", "synapse.distance", "synapse.path_distance",
                 "branches[].end.G", "map_spacing_um", "equivalent_cylinder.tolerance", "frequencies_hz"):
        assert fields[path]["label"], path
    assert fields["membrane.Ri"]["unit"] == "Ω·cm" and fields["frequencies_hz"]["unit"] == "Hz"
    inputs = q.vocabulary()["inputs"]
    assert inputs["membrane.Rm"]["label_html"] == "Specific membrane resistance R<sub>m</sub>"


@pytest.mark.parametrize("edit, path, plain", [
    (lambda s: s["membrane"].__setitem__("Ri", None), "membrane.Ri", "Axial resistivity R_i: enter a number in Ω·cm"),
    (lambda s: s["branches"][0].__setitem__("diameter", -1), "branches[0].diameter",
     "Diameter: enter a number greater than 0 µm"),
    (lambda s: s["membrane"].pop("Ri"), "membrane", "Axial resistivity R_i: enter a number in Ω·cm"),
    (lambda s: s["branches"][0].__setitem__("end", "seal"), "branches[0].end",
     "Far end: choose one of 'sealed', 'killed', 'infinite'"),
    (lambda s: s["synapse"].__setitem__("distance", 700), "synapse.distance",
     "Synapse distance from the branch's start: must be ≤ 600 µm"),
])
def test_plain_messages_use_the_field_label(edit, path, plain):
    sc = json.loads(json.dumps(ONE))
    edit(sc)
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve(sc)
    assert err.value.path == path
    assert err.value.plain.startswith(plain), err.value.plain
    assert "\n" not in err.value.plain and not re.search(r"\[\d+\]", err.value.plain)


def test_a_branch_id_is_text_not_markup():
    """A branch id goes into a label after the markup is read, escaped for each form."""
    bid = "a_[x]^[y]&<b>{rec}"
    assert q.label("lambda_um.*", item=bid) == f"Space constant λ of branch {bid}"
    assert q.label("lambda_um.*", form="html", item=bid).endswith("a_[x]^[y]&amp;&lt;b&gt;{rec}")
    assert q.label("lambda_um.*", form="latex", item=bid).endswith(r"a\_[x]\textasciicircum{}[y]\&<b>\{rec\}")


def test_plain_messages_count_branches_from_1_and_name_the_whole_scenario():
    sc = json.loads(json.dumps(NO_SOMA))
    sc["branches"][2]["id"] = "left"
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve(sc)
    assert err.value.path == "branches[2].id"
    assert err.value.plain == "Branch id: 'left' is already the id of branch 2"
    with pytest.raises(somaward.ScenarioError) as err:
        somaward.solve([1, 2])
    assert err.value.plain.startswith("this is not a scenario")


def test_input_fields_carry_the_engine_defaults():
    fields = q.input_fields()
    assert fields["equivalent_cylinder.tolerance"]["default"] == 0.05
    assert fields["membrane.Cm"]["default"] == 1.0 and fields["membrane.Rm"]["default"] is None
    assert "^" not in fields["equivalent_cylinder.tolerance"]["description"].replace("^3/2", "")
