"""Command line: ``wavebench demo`` (more commands come with the trial runner)."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from pathlib import Path

from .core.errors import ParameterError

__all__ = ["main"]


def _demo(args: argparse.Namespace) -> int:
    from .demo import DemoScenario, run_demo

    scenario = DemoScenario(craft_name=args.craft, n_trials=args.trials, seed=args.seed, speed_mps=args.speed)
    result = run_demo(scenario, progress=not args.quiet)
    print(result.text())
    if args.html:
        path = Path(args.html)
        path.write_text(result.html(), encoding="utf-8")
        print(f"\nHTML report written to {path}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``wavebench`` command."""
    parser = argparse.ArgumentParser(
        prog="wavebench",
        description="A bench for marine guidance, navigation and control.",
    )
    sub = parser.add_subparsers(dest="command", required=True)
    demo = sub.add_parser(
        "demo",
        help="sea-state, seakeeping, closed-loop and manoeuvring report for a demo craft",
        description="Run the built-in demo on invented data and print its report.",
    )
    demo.add_argument("--craft", default="Tholepin", help="demo craft name (Tholepin, Dulse)")
    demo.add_argument("--trials", type=int, default=200, help="closed-loop trials (default 200)")
    demo.add_argument("--seed", type=int, default=2026, help="campaign seed (default 2026)")
    demo.add_argument("--speed", type=float, default=None, help="ordered speed [m/s] (default 80 %% of top speed)")
    demo.add_argument("--html", metavar="PATH", help="also write a self-contained HTML report")
    demo.add_argument("--quiet", action="store_true", help="no progress bar")
    demo.set_defaults(func=_demo)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``wavebench`` command; returns the exit status."""
    args = build_parser().parse_args(argv)
    try:
        return int(args.func(args))
    except ParameterError as exc:
        print(f"wavebench: error: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":
    raise SystemExit(main())
