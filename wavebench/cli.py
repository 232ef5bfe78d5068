"""Command line: run campaigns from spec files, write their reports, try the built-in scenarios.

``wavebench run SPEC --out DIR``
    Run a campaign into a store folder (spec, manifest, metrics.parquet,
    timeseries.zarr, verdicts.json).
``wavebench report DIR``
    Write DIR/report.html, self-contained.
``wavebench demo [NAME] [--out DIR]``, ``wavebench demo --list``
    Run a built-in invented scenario end to end and write its report.
``wavebench example NAME``, ``wavebench example --craft NAME``
    Print a built-in scenario's spec (or a demo craft as an inline
    ``[craft]`` table), the starting point for a spec of one's own.
``wavebench seakeeping``
    Sea-state, seakeeping and manoeuvring report for a demo craft.
``wavebench replay DIR TRIAL``, ``wavebench export DIR FILE.nc``
    Run one stored trial alone and check its bits; one NetCDF file of a store.
``wavebench verify NOTEBOOK``
    Re-run a saved notebook headlessly and check every result card in it
    reproduces bit for bit (spec hash and result hash).

Errors are one readable line on standard error and exit status 2.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from pathlib import Path

from .core.errors import ParameterError

__all__ = ["build_parser", "main"]


def _print_summary(result, out: Path) -> None:
    from .analysis.verdicts import verdicts_table_text
    from .report.html import CAUTION

    m = result.metrics
    counts = m["ended"].value_counts().to_dict()
    n = len(m)
    print(f"{n} trials of '{result.spec.scenario.name}' in {result.wall_time_s:.1f} s: "
          + ", ".join(f"{counts.get(k, 0)} {k}" for k in ("completed", "truncated", "failed")))  # fmt: skip
    if result.verdicts:
        print(verdicts_table_text(result.verdicts))
    else:
        print("no requirements in the spec")
    if result.sequential:
        for name, st in result.sequential.items():
            print(f"sequential: {name}: {st.decision} after {st.n_trials} trials")
    if not result.complete:
        print("INTERRUPTED: the store holds the batches that finished")
    print(f"results in {out}/")
    print("CAUTION: " + CAUTION)


def _spec_path(name: str) -> Path:
    """A spec file, or the file of a built-in scenario given by name."""
    from .spec.io import example_spec_names, example_spec_path

    path = Path(name)
    if not path.exists() and name in example_spec_names():
        return example_spec_path(name)
    return path


def _run(args: argparse.Namespace) -> int:
    from .campaign import run_campaign, write_store
    from .spec.io import load_spec

    record = not args.no_record
    if args.resume:
        import json

        given = [f"--{k.replace('_', '-')}" for k in ("spec", "out", "trials", "seed", "batch_size", "set",
                                                      "until_decided") if getattr(args, k)]  # fmt: skip
        if given:
            raise ParameterError("--resume", args.resume,
                                 f"continues the store's own campaign: drop {', '.join(given)}")  # fmt: skip
        plan = Path(args.resume) / "chunks" / "plan.json"
        if not plan.is_file():
            raise ParameterError("resume", args.resume, "has no unfinished campaign to resume (no chunks/plan.json)")
        planned = json.loads(plan.read_text(encoding="utf-8"))
        record = bool(planned["record"])
        args.spec, args.out = str(Path(args.resume) / "spec.toml"), args.resume
    elif not args.spec or not args.out:
        raise ParameterError("run", "arguments", "needs a SPEC and --out DIR (or --resume DIR)")
    spec = load_spec(_spec_path(args.spec), args.set or ())
    until = None
    if args.resume and planned.get("until"):  # the sequential plan the campaign started with
        from .analysis.sequential import SequentialPlan

        until = SequentialPlan(**planned["until"])
    elif args.until_decided is not None:
        from .analysis.sequential import SequentialPlan

        every = args.batch_size or spec.campaign.batch_size
        confidence = max((req.confidence for _, req in spec.requirements), default=0.95)
        until = SequentialPlan(confidence=confidence, max_trials=args.until_decided, first_look=every,
                               look_every=every)  # fmt: skip
    try:
        result = run_campaign(spec, trials=args.trials, seed=args.seed, batch_size=args.batch_size, record=record,
                              progress=not args.quiet, executor=args.executor, workers=args.workers,
                              scheduler=args.scheduler, until=until, store=args.out,
                              resume=bool(args.resume))  # fmt: skip
    except OSError as exc:
        print(f"wavebench: {exc}", file=sys.stderr)
        return 1
    out = Path(args.out)
    if not result.complete:  # interrupted: the finished chunks (and their time series) stay for --resume
        write_store(result, out, timeseries_written=True)
    if args.report:
        from .report.campaign import write_campaign_report

        print(f"report: {write_campaign_report(out)}")
    _print_summary(result, out)
    return 0 if result.complete else 130


def _export(args: argparse.Namespace) -> int:
    from .campaign import export_netcdf

    print(f"written {export_netcdf(Path(args.store), Path(args.file))}")
    return 0


def _replay(args: argparse.Namespace) -> int:
    from .campaign import read_store
    from .campaign.replay import compare_with_store, replay_trial

    store = read_store(Path(args.store))
    spec, metrics = store["spec"], store["metrics"]
    rows = metrics.index[metrics["trial"] == args.trial]
    if len(rows) == 0:
        raise ParameterError("trial", args.trial, f"must be a trial of the store (0 to {int(metrics['trial'].max())})")
    rep = replay_trial(spec, args.trial, record=False)
    same = True
    for name, a, b, equal in compare_with_store(rep, metrics.loc[rows[0]]):
        same &= equal
        if args.verbose or not equal:
            print(f"{name:<28} replayed {a!s:<24} stored {b!s:<24}{'' if equal else '  DIFFERS'}")
    print(f"trial {args.trial} replayed alone: {'the same bits as the store' if same else 'DIFFERS from the store'}")
    return 0 if same else 1


def _report(args: argparse.Namespace) -> int:
    from .report.campaign import write_campaign_report

    path = write_campaign_report(Path(args.store), args.html)
    print(f"report written to {path}")
    return 0


def _demo(args: argparse.Namespace) -> int:
    from .campaign import run_campaign, write_store
    from .report.campaign import write_campaign_report
    from .spec.io import example_spec_names, example_spec_path, load_spec

    if args.list:
        for name in example_spec_names():
            spec = load_spec(example_spec_path(name))
            print(f"{name:<20} {spec.scenario.name} ({spec.craft.build().name}, {spec.campaign.trials} trials)")
        return 0
    spec = load_spec(example_spec_path(args.name), args.set or ())
    out = Path(args.out or f"wavebench-demo-{args.name}")
    result = run_campaign(spec, trials=args.trials, progress=not args.quiet)
    write_store(result, out)
    report = write_campaign_report(out)
    _print_summary(result, out)
    print(f"report: {report}")
    return 0 if result.complete else 130


def _example(args: argparse.Namespace) -> int:
    from .spec.io import example_spec_path

    if args.craft:
        from .craft.catalogue import demo_craft
        from .spec.io import dump_spec
        from .spec.tables import CraftSpec

        craft = demo_craft(args.craft)
        inline = CraftSpec(name=craft.name, hull=craft.hull, **(
            {"differential_thrust": craft.propulsion} if hasattr(craft.propulsion, "port")
            else {"prop_rudder": craft.propulsion}))  # fmt: skip
        text = dump_spec(inline)
        body = text.replace("\n[", "\n[craft.")
        print(f"# {craft.name} written inline: paste into a spec in place of its [craft] table\n[craft]\n{body}")
        return 0
    if not args.name:
        raise ParameterError("NAME", None, "give a built-in scenario name (see 'wavebench demo --list') or --craft")
    sys.stdout.write(example_spec_path(args.name).read_text(encoding="utf-8"))
    return 0


def _seakeeping(args: argparse.Namespace) -> int:
    from .demo import DemoScenario, run_demo

    scenario = DemoScenario(craft_name=args.craft, n_trials=args.trials, seed=args.seed, speed_mps=args.speed)
    result = run_demo(scenario, progress=not args.quiet)
    print(result.text())
    if args.html:
        path = Path(args.html)
        path.write_text(result.html(), encoding="utf-8")
        print(f"\nHTML report written to {path}")
    return 0


def _verify(args: argparse.Namespace) -> int:
    from .notebook_verify import main as verify_main

    return verify_main(args.notebook, timeout=args.timeout)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``wavebench`` command."""
    parser = argparse.ArgumentParser(
        prog="wavebench", description="A bench for marine guidance, navigation and control."
    )
    sub = parser.add_subparsers(dest="command", required=True)

    run = sub.add_parser("run", help="run a campaign from a spec file into a store folder",
                         description="Run a Monte Carlo campaign from a TOML spec; write a store folder.")  # fmt: skip
    run.add_argument("spec", nargs="?", help="the spec file (TOML), or a built-in scenario's name")
    run.add_argument("--out", metavar="DIR", help="store folder to write (finished batches are kept as they come)")
    run.add_argument("--resume", metavar="DIR", help="continue the unfinished campaign in DIR: only missing batches "
                     "run, and the results are the same bits as an uninterrupted run")  # fmt: skip
    run.add_argument("--trials", type=int, help="number of trials (overrides the spec)")
    run.add_argument("--seed", type=int, help="campaign seed (overrides the spec)")
    run.add_argument("--batch-size", type=int, help="trials per vectorised batch (results do not depend on it)")
    run.add_argument("--no-record", action="store_true", help="keep metrics only, no time series")
    run.add_argument("--report", action="store_true", help="also write DIR/report.html")
    run.add_argument("--quiet", action="store_true", help="no progress bar")
    run.add_argument("--executor", choices=("inline", "processes", "dask"),
                     help="where the batches run: this process, local worker processes, or Dask (default: the "
                          "spec's campaign.executor, inline unless set); the results are the same bits")  # fmt: skip
    run.add_argument("--workers", type=int, help="worker processes (processes) or local Dask workers")
    run.add_argument("--scheduler", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://host:8786")
    run.add_argument("--until-decided", type=int, metavar="MAX_TRIALS",
                     help="run batch after batch until every requirement is decided (sequential verdicts, valid "
                          "under repeated looks) or MAX_TRIALS is reached")  # fmt: skip
    run.add_argument("--set", action="append", metavar="PATH=VALUE",
                     help="change a spec field before the run, e.g. --set stack.navigator=dead_reckoning "
                          "(repeatable; VALUE is a TOML value or a bare word)")  # fmt: skip
    run.set_defaults(func=_run)

    exp = sub.add_parser("export", help="write a store as one NetCDF file for sharing")
    exp.add_argument("store", metavar="DIR", help="store folder written by 'wavebench run'")
    exp.add_argument("file", metavar="FILE.nc", help="the NetCDF file to write")
    exp.set_defaults(func=_export)

    rpl = sub.add_parser("replay", help="run one trial of a store alone and check it gives the stored bits")
    rpl.add_argument("store", metavar="DIR", help="store folder written by 'wavebench run'")
    rpl.add_argument("trial", type=int, help="trial number")
    rpl.add_argument("--verbose", action="store_true", help="print every metric, not only those that differ")
    rpl.set_defaults(func=_replay)

    rep = sub.add_parser("report", help="write the HTML report of a store folder",
                         description="Write a self-contained HTML report of a campaign store.")  # fmt: skip
    rep.add_argument("store", metavar="DIR", help="store folder written by 'wavebench run'")
    rep.add_argument("--html", metavar="PATH", help="where to write it (default DIR/report.html)")
    rep.set_defaults(func=_report)

    demo = sub.add_parser("demo", help="run a built-in invented scenario end to end and write its report",
                          description="Run a built-in scenario; write its store and report.")  # fmt: skip
    demo.add_argument("name", nargs="?", default="skerrow_sound", help="scenario name (default skerrow_sound)")
    demo.add_argument("--out", metavar="DIR", help="store folder (default wavebench-demo-NAME)")
    demo.add_argument("--trials", type=int, help="number of trials (default: the scenario's)")
    demo.add_argument("--list", action="store_true", help="list the built-in scenarios")
    demo.add_argument("--quiet", action="store_true", help="no progress bar")
    demo.add_argument("--set", action="append", metavar="PATH=VALUE", help="change a spec field (as for 'run')")
    demo.set_defaults(func=_demo)

    ex = sub.add_parser("example", help="print a built-in scenario's spec, or a demo craft inline",
                        description="Print a built-in spec as TOML: the starting point for your own.")  # fmt: skip
    ex.add_argument("name", nargs="?", help="scenario name (see 'wavebench demo --list')")
    ex.add_argument("--craft", metavar="CRAFT", help="print this demo craft as an inline [craft] table instead")
    ex.set_defaults(func=_example)

    sk = sub.add_parser("seakeeping", help="sea-state, seakeeping and manoeuvring report for a demo craft",
                        description="Sea state, RAO motions, drift and manoeuvres of a demo craft.")  # fmt: skip
    sk.add_argument("--craft", default="Tholepin", help="demo craft name (Tholepin, Dulse)")
    sk.add_argument("--trials", type=int, default=200, help="closed-loop trials (default 200)")
    sk.add_argument("--seed", type=int, default=2026, help="campaign seed (default 2026)")
    sk.add_argument("--speed", type=float, default=None, help="ordered speed [m/s] (default 80 %% of top speed)")
    sk.add_argument("--html", metavar="PATH", help="also write a self-contained HTML report")
    sk.add_argument("--quiet", action="store_true", help="no progress bar")
    sk.set_defaults(func=_seakeeping)

    ver = sub.add_parser("verify", help="re-run a saved notebook and check its results reproduce bit for bit",
                         description="Re-execute a copy of a saved notebook; compare its results' hashes.")
    ver.add_argument("notebook", nargs="+", metavar="NOTEBOOK", help="saved .ipynb file(s) with their outputs")
    ver.add_argument("--timeout", type=float, default=600.0, help="longest run of one cell [s] (default 600)")
    ver.set_defaults(func=_verify)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``wavebench`` command; returns the exit status."""
    args = build_parser().parse_args(argv)
    try:
        return int(args.func(args))
    except ParameterError as exc:
        print(f"wavebench: error: {exc}", file=sys.stderr)
        return 2
    except OSError as exc:
        print(f"wavebench: error: {exc.strerror or exc}: {exc.filename or ''}".rstrip(": "), file=sys.stderr)
        return 2


if __name__ == "__main__":
    raise SystemExit(main())
