"""The ``somaward`` command: reports from scenario files, quick cable constants, the demo.

Errors are one line on stderr naming the field and what is allowed, exit code 2; never a
traceback for bad input.
"""

import argparse
import json
import math
import sys
from importlib import resources

from .errors import ScenarioError
from .export import FORMATS, format_value, render

__all__ = ["main"]

DEMO = "invented_pyramid.json"


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        self.exit(2, f"somaward: error: {message} (see 'somaward --help')\n")


def _read_scenario(path):
    try:
        text = sys.stdin.read() if path == "-" else open(path, encoding="utf-8").read()
    except OSError as err:
        raise ScenarioError("", f"{path}: cannot read the file ({err.strerror})") from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as err:
        raise ScenarioError("", f"{'stdin' if path == '-' else path}: not valid JSON: {err.msg} at line "
                            f"{err.lineno} column {err.colno}") from None


def _cmd_report(args):
    from .report import solve
    sys.stdout.write(render(solve(_read_scenario(args.scenario)), args.format))


def _cmd_demo(args):
    from .report import solve
    text = resources.files("somaward").joinpath("demo", DEMO).read_text("utf-8")
    sys.stdout.write(render(solve(json.loads(text)), args.format))


def _positive(name):
    def parse(text):
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"must be a number, got {text!r}") from None
        if not (math.isfinite(value) and value > 0):
            raise argparse.ArgumentTypeError(f"must be a finite number > 0, got {text}")
        return value
    return parse


def _cmd_constants(args):
    from .cable import cylinder_input_resistance_Mohm
    from .membrane import input_resistance_infinite_Mohm, membrane_time_constant_ms, space_constant_um
    lam = float(space_constant_um(args.diameter, args.Rm, args.Ri))
    r_inf = float(input_resistance_infinite_Mohm(args.diameter, args.Rm, args.Ri))
    rows = [("space constant λ", lam, "µm"),
            ("membrane time constant τm", membrane_time_constant_ms(args.Rm, args.Cm), "ms"),
            ("input resistance of a semi-infinite cylinder R∞", r_inf, "MΩ")]
    if args.length is not None:
        L = args.length / lam
        rows += [("electrotonic length L", L, ""),
                 ("input resistance, sealed end (R∞·coth L)", cylinder_input_resistance_Mohm(r_inf, L, "sealed"), "MΩ"),
                 ("input resistance, killed end (R∞·tanh L)", cylinder_input_resistance_Mohm(r_inf, L, "killed"), "MΩ")]
    width = max(len(r[0]) for r in rows)
    for name, value, unit in rows:
        print(f"{name:<{width}}  {format_value(float(value), 6):>10} {unit}")


def _cmd_schema(args):
    sys.stdout.write(resources.files("somaward").joinpath("scenario.schema.json").read_text("utf-8"))


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
                   help="json (the whole report), md (table + methods paragraph), tsv, csv or latex (table)")
    r.set_defaults(run=_cmd_report)
    d = sub.add_parser("demo", help="solve the bundled demo scenario (an invented cell)",
                       description="Solve the bundled demo scenario: an invented cell, not a real neuron.")
    d.add_argument("--format", choices=FORMATS, default="md")
    d.set_defaults(run=_cmd_demo)
    c = sub.add_parser("constants", help="λ, τm and R∞ of one cylinder",
                       description="Cable constants of one uniform cylinder (Rall 1977).")
    c.add_argument("--Rm", type=_positive("Rm"), required=True, help="specific membrane resistance, Ω·cm²")
    c.add_argument("--Ri", type=_positive("Ri"), required=True, help="axial resistivity, Ω·cm")
    c.add_argument("--Cm", type=_positive("Cm"), default=1.0, help="specific capacitance, µF/cm² (default 1.0)")
    c.add_argument("--diameter", type=_positive("diameter"), required=True, help="diameter, µm")
    c.add_argument("--length", type=_positive("length"), default=None, help="length, µm (adds L and R_in)")
    c.set_defaults(run=_cmd_constants)
    s = sub.add_parser("schema", help="print the scenario JSON Schema")
    s.set_defaults(run=_cmd_schema)
    return p


def main(argv=None):
    args = build_parser().parse_args(argv)
    try:
        args.run(args)
    except ScenarioError as err:
        sys.stderr.write(f"somaward: error: {err}\n")
        return 2
    except BrokenPipeError:
        return 0
    return 0


if __name__ == "__main__":
    sys.exit(main())
