"""The ``heatstack`` command line.

Exit codes: 0 success, 2 bad input (a heatstack input error), 1 internal error.
User errors print one clear line, never a traceback.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from . import __version__
from .errors import HeatstackError, InputError

__all__ = ["main"]


def _cmd_materials(args: argparse.Namespace) -> int:
    from .materials import available_materials, load_material

    for name in available_materials():
        material = load_material(name)
        low, high = material.specific_heat.temperature_range
        kind = "anisotropic" if material.anisotropic else "isotropic"
        print(f"{name:32s} {material.density:7.0f} kg/m^3  {low:5.0f}-{high:5.0f} K  {kind}")
    return 0


def _cmd_demo(args: argparse.Namespace) -> int:
    from .demo import run_demo

    print(run_demo())
    return 0


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="heatstack",
        description="Transient heat conduction in an aircraft wheel and brake after a braking duty. "
        "Not certified data: defer to the manufacturer's maintenance data.",
    )
    parser.add_argument("--version", action="version", version=f"heatstack {__version__}")
    verbs = parser.add_subparsers(dest="verb", required=True, metavar="VERB")
    demo = verbs.add_parser("demo", help="run the invented demonstration case and print its report")
    demo.set_defaults(func=_cmd_demo)
    materials = verbs.add_parser("materials", help="list the shipped materials")
    materials.set_defaults(func=_cmd_materials)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    args = _parser().parse_args(argv)
    try:
        return int(args.func(args))
    except InputError as exc:
        print(f"heatstack: error: {exc}", file=sys.stderr)
        return 2
    except HeatstackError as exc:
        print(f"heatstack: failed: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("heatstack: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
