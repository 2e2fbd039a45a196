"""Command line: ``python -m largerot demo [pole|mast|lean] [--png FILE]``."""
from __future__ import annotations

import argparse
import sys


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="largerot", description="largerot command line")
    sub = parser.add_subparsers(dest="command", required=True)
    demo = sub.add_parser("demo", help="trace a built-in example: the cantilevered pole "
                                       "(default) or the guyed mast")
    demo.add_argument("example", nargs="?", choices=("pole", "mast", "lean"), default="pole")
    demo.add_argument("--png", default=None, help="figure to write ('' for none)")
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
