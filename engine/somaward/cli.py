"""The ``somaward`` command: reports from scenario files, quick cable constants, the demo.

Errors are one line on stderr naming the field and what is allowed, exit code 2; never a
traceback for bad input.
"""

import argparse
import json
import math
import sys
from importlib import resources

from .errors import InternalError, ScenarioError
from .export import FORMATS, render

__all__ = ["main"]

DEMO = "invented_pyramid.json"


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        self.exit(2, f"somaward: error: {message} (see 'somaward --help')\n")


def _read_scenario(path):
    """The scenario in a file ('-': stdin), read as bytes and parsed with limits (see jsonin)."""
    from .jsonin import load_path
    return load_path(path)


def _cmd_report(args):
    from .report import solve
    sys.stdout.write(render(solve(_read_scenario(args.scenario)), args.format))


def _cmd_demo(args):
    from .report import solve
    text = resources.files("somaward").joinpath("demo", DEMO).read_text("utf-8")
    sys.stdout.write(render(solve(json.loads(text)), args.format))


def _positive_number(text):
    """An option's value as a finite number > 0 (argparse names the option in its message)."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a number, got {text!r}") from None
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"must be a finite number > 0, got {text}")
    return value


CONSTANTS_ORDER = ("lambda_um", "tau_m_ms", "input_resistance_infinite_Mohm", "electrotonic_length",
                   "input_resistance_sealed_Mohm", "input_resistance_killed_Mohm")


def cylinder_constants(diameter_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2=1.0, length_um=None):
    """The numbers of ``somaward constants``: key of ``quantities.CYLINDER_CONSTANTS`` → value.

    λ, τm and R∞ of a uniform cylinder; with a length, its electrotonic length L and its input
    resistance with the far end sealed (R∞·coth L) or killed (R∞·tanh L) (Rall 1959; Rall 1977).
    """
    from .cable import cylinder_input_resistance_Mohm
    from .membrane import input_resistance_infinite_Mohm, membrane_time_constant_ms, space_constant_um
    lambda_um = float(space_constant_um(diameter_um, rm_ohm_cm2, ri_ohm_cm))
    r_inf_Mohm = float(input_resistance_infinite_Mohm(diameter_um, rm_ohm_cm2, ri_ohm_cm))
    out = {"lambda_um": lambda_um, "tau_m_ms": float(membrane_time_constant_ms(rm_ohm_cm2, cm_uF_cm2)),
           "input_resistance_infinite_Mohm": r_inf_Mohm}
    if length_um is not None:
        electrotonic_length = length_um / lambda_um
        out.update(electrotonic_length=electrotonic_length,
                   input_resistance_sealed_Mohm=float(
                       cylinder_input_resistance_Mohm(r_inf_Mohm, electrotonic_length, "sealed")),
                   input_resistance_killed_Mohm=float(
                       cylinder_input_resistance_Mohm(r_inf_Mohm, electrotonic_length, "killed")))
    return out


_CONSTANTS_OPTIONS = {"membrane.Rm": "--Rm", "membrane.Ri": "--Ri", "membrane.Cm": "--Cm",
                      "branches[0].diameter": "--diameter", "branches[0].length": "--length"}


def _check_constants_inputs(args):
    """The options hold the scenario's fields, so the scenario schema's bounds apply to them."""
    from .scenario import validate
    cylinder = {"id": "c", "parent": None, "diameter": args.diameter_um,
                "length": args.length_um if args.length_um is not None else 1.0}
    try:
        membrane = {"Rm": args.rm_ohm_cm2, "Ri": args.ri_ohm_cm, "Cm": args.cm_uF_cm2}
        validate({"membrane": membrane, "branches": [cylinder], "synapse": {"branch": "c", "distance": 0}})
    except ScenarioError as err:
        option = _CONSTANTS_OPTIONS.get(err.path)
        if option is None:
            raise
        raise ScenarioError(option, err.rule) from None


def _cmd_constants(args):
    from . import __version__
    from .quantities import CAUTIONS, CYLINDER_CONSTANTS, format_value, render_markup
    _check_constants_inputs(args)
    values = cylinder_constants(args.diameter_um, args.rm_ohm_cm2, args.ri_ohm_cm, args.cm_uF_cm2, args.length_um)
    if args.format == "json":
        inputs = {"diameter": args.diameter_um, "Rm": args.rm_ohm_cm2, "Ri": args.ri_ohm_cm, "Cm": args.cm_uF_cm2,
                  "length": args.length_um}
        sys.stdout.write(json.dumps({"engine_version": __version__, "inputs": inputs, **values,
                                     "caution": list(CAUTIONS)}, indent=1, ensure_ascii=False) + "\n")
        return
    rows = []
    for key in CONSTANTS_ORDER:
        if key in values:
            q = CYLINDER_CONSTANTS[key]
            rows.append((render_markup(q.label), format_value(values[key], digits=q.digits), q.unit))
    width = max(len(r[0]) for r in rows)
    for name, value, unit in rows:
        print(f"{name:<{width}}  {value:>10} {unit}".rstrip())
    print()
    for caution in CAUTIONS:
        print(f"Caution: {caution}")


def _cmd_schema(_args):
    sys.stdout.write(resources.files("somaward").joinpath("scenario.schema.json").read_text("utf-8"))


def _input_fields():
    """Label and unit of each input field, from the scenario schema (plain text)."""
    from .quantities import input_fields
    return {path: (field["label"], field["unit"]) for path, field in input_fields().items()}


def build_parser():
    from . import __version__
    p = _Parser(prog="somaward", description="Passive-cable attenuation of synaptic signals between a "
                "dendritic synapse and the soma. Units: µm, ms, pA, nS, pF, Hz; Rm Ω·cm², Ri Ω·cm, Cm µF/cm².")
    p.add_argument("--version", action="version", version=f"somaward {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)
    r = sub.add_parser("report", help="solve a scenario file and print the report",
                       description="Solve SCENARIO.json ('-' reads stdin) and print the report.")
    r.add_argument("scenario", metavar="SCENARIO.json")
    r.add_argument("--format", choices=FORMATS, default="json",
                   help="json (the whole report), md (tables + methods paragraph), tsv, csv or latex (tables); "
                   "every format carries the cautions of a passive-cable estimate")
    r.set_defaults(run=_cmd_report)
    d = sub.add_parser("demo", help="solve the bundled demo scenario (an invented cell)",
                       description="Solve the bundled demo scenario: an invented cell, not a real neuron.")
    d.add_argument("--format", choices=FORMATS, default="md")
    d.set_defaults(run=_cmd_demo)
    c = sub.add_parser("constants", help="λ, τm and R∞ of one cylinder (with --length: L and input resistances)",
                       description="Cable constants of one uniform cylinder (Rall 1959; Rall 1977).")
    fields = _input_fields()
    # Options carry the scenario's symbols; the parsed values carry their units (args.rm_ohm_cm2 …).
    for opt, dest, path, kw in (("--Rm", "rm_ohm_cm2", "membrane.Rm", {"required": True}),
                                ("--Ri", "ri_ohm_cm", "membrane.Ri", {"required": True}),
                                ("--Cm", "cm_uF_cm2", "membrane.Cm", {"default": 1.0}),
                                ("--diameter", "diameter_um", "branches[].diameter", {"required": True}),
                                ("--length", "length_um", "branches[].length", {"default": None})):
        label, unit = fields[path]
        extra = " (adds L and the input resistances with a sealed or killed far end)" if opt == "--length" else ""
        dflt = f"; {kw['default']:g} if not given" if kw.get("default") else ""
        c.add_argument(opt, dest=dest, metavar=opt[2:].upper(), type=_positive_number,
                       help=f"{label}, {unit}{dflt}{extra}", **kw)
    c.add_argument("--format", choices=("text", "json"), default="text",
                   help="text (a table for reading) or json (keys with their units, for scripts)")
    c.set_defaults(run=_cmd_constants)
    s = sub.add_parser("schema", help="print the scenario JSON Schema")
    s.set_defaults(run=_cmd_schema)
    return p


def main(argv=None):
    """Run the ``somaward`` command.

    Parameters
    ----------
    argv : list of str, optional
        The arguments after the program name; ``sys.argv[1:]`` when None (default).

    Returns
    -------
    int
        Exit code: 0 done, 2 bad input or usage (one line on stderr naming the field), 3 an
        internal error (one line with the scenario's fingerprint).
    """
    args = build_parser().parse_args(argv)
    try:
        args.run(args)
    except ScenarioError as err:
        sys.stderr.write(f"somaward: error: {err}\n")
        return 2
    except InternalError as err:       # the engine's fault, not the input's: say so, one line
        sys.stderr.write(f"somaward: internal error (please report it with the scenario): {err}\n")
        return 3
    except BrokenPipeError:
        return 0
    return 0


if __name__ == "__main__":
    sys.exit(main())
