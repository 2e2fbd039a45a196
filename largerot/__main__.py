"""Command line: ``python -m largerot demo [--png FILE]``."""
from __future__ import annotations

import argparse
import sys


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="largerot", description="largerot command line")
    sub = parser.add_subparsers(dest="command", required=True)
    demo = sub.add_parser("demo", help="trace the built-in cantilevered pole example")
    demo.add_argument("--png", default="largerot-demo.png", help="figure to write ('' for none)")
    args = parser.parse_args(argv)
    if args.command == "demo":
        from .demo import run_demo
        print(run_demo(args.png or None))
    return 0


if __name__ == "__main__":
    sys.exit(main())
