"""Command line: ``python -m largerot demo [pole|mast|lean] [--png FILE]``."""
from __future__ import annotations

import argparse
import sys

#: The built-in demos, each with what it traces (``largerot.demo``).
DEMOS = {
    "pole": "an 8 m glass-fibre pole bent by a tip load",
    "mast": "a 30 m guyed mast until its leeward guy goes slack",
    "lean": "a steel pole that yields at its base and leans on a wall",
}


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="largerot", description="largerot command line")
    sub = parser.add_subparsers(dest="command", required=True)
    choices = ", ".join(f"{name} ({what})" for name, what in DEMOS.items())
    demo = sub.add_parser("demo", help=f"trace a built-in example: {choices}",
                          description=f"Trace a built-in example (invented scenarios): {choices}. "
                                      "Prints a table and writes a figure.")
    demo.add_argument("example", nargs="?", choices=tuple(DEMOS), default="pole",
                      help="which example (default: pole)")
    demo.add_argument("--png", default=None,
                      help="figure to write (default largerot-demo.png for the pole, "
                           "largerot-<example>.png otherwise; '' for none)")
    args = parser.parse_args(argv)
    if args.command == "demo":
        from .demo import run_demo, run_lean_demo, run_mast_demo
        run = {"pole": run_demo, "mast": run_mast_demo, "lean": run_lean_demo}[args.example]
        name = "demo" if args.example == "pole" else args.example
        png = f"largerot-{name}.png" if args.png is None else args.png
        print(run(png or None))
    return 0


if __name__ == "__main__":
    sys.exit(main())
