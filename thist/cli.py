"""The ``thist`` command.

Subcommands: ``run`` (analyse a case and write results and the report),
``check`` (model, modes and every time-step check, no integration), ``compare``
(several methods and steps on one case), ``verify`` (benchmark problems).
Bad input or a refused time step is one line on stderr and exit status 2;
``--debug`` shows the traceback.
"""

from __future__ import annotations

import argparse
import sys
import traceback
from collections.abc import Callable, Sequence
from pathlib import Path

from thist import __version__, cautions
from thist.errors import InputError, StabilityError

Handler = Callable[[argparse.Namespace], int]


def _default_outdir(case_path: str) -> Path:
    return Path("reports") / Path(case_path).stem


def _methods_arg(values: list[str] | None) -> list[str] | None:
    if not values:
        return None
    out = []
    for v in values:
        out += [x.strip() for x in v.split(",") if x.strip()]
    return out


def cmd_run(args: argparse.Namespace) -> int:
    """Run a case: results.json, histories.csv, report.pdf and a terminal summary."""
    from thist.analysis import run_case
    from thist.case import load_case
    from thist.report import write_report
    from thist.results import summary_text, write_results

    case = load_case(args.case)
    result = run_case(case, methods=_methods_arg(args.method))
    outdir = Path(args.output) if args.output else _default_outdir(args.case)
    files = write_results(result, outdir)
    files.append(write_report(outdir / "report.pdf", result))
    print(summary_text(result))
    print("\nwrote " + ", ".join(str(f) for f in files))
    return 0


def cmd_compare(args: argparse.Namespace) -> int:
    """Run several methods (and steps) on one case; results.json and report.pdf."""
    from thist.case import load_case
    from thist.compare import compare_case, comparison_dict
    from thist.report import write_report
    from thist.results import write_results
    from thist.units import parse_quantity

    case = load_case(args.case)
    methods = _methods_arg(args.methods)
    dts = None
    if args.dt:
        dts = []
        for i, text in enumerate(args.dt):
            value = text if any(c.isalpha() for c in text) else f"{text} s"
            dts.append(parse_quantity(value, "time", f"--dt[{i}]"))
            if not dts[-1] > 0:
                raise InputError(f"must be positive, got {text!r}", f"--dt[{i}]")
    comp = compare_case(case, methods, dts)
    outdir = Path(args.output) if args.output else _default_outdir(args.case)
    first = comp.results[0]
    files = write_results(first, outdir, {"comparison": comparison_dict(comp)})
    files.append(write_report(outdir / "report.pdf", first, comp))
    print(f"thist {__version__}: {case.title}")
    print(f"{'method':24s} {'dt [s]':>9s} {'roof disp [m]':>14s} {'diff':>9s}  energy err")
    for r in comp.rows:
        if r.status == "refused":
            print(f"{r.label:24s} {r.dt:9.4g}  refused: {r.reason}")
            continue
        rel = r.rel_diff.get("roof_displacement")
        rel_text = "-" if rel is None else f"{100 * rel:+.3f}%"
        print(
            f"{r.label:24s} {r.dt:9.4g} {r.peaks['roof_displacement']:14.5g} {rel_text:>9s}  "
            f"{r.balance_error:.2e}"
        )
    print("\n" + cautions.SHORT)
    print("\nwrote " + ", ".join(str(f) for f in files))
    return 0


def cmd_verify(args: argparse.Namespace) -> int:
    """Run the benchmark problems; write verification.pdf; exit 1 if any fails."""
    from thist.report import write_verification_summary
    from thist.verification import run_problems

    outcomes = run_problems()
    outdir = Path(args.output) if args.output else Path("reports") / "verification"
    path = write_verification_summary(outdir / "verification.pdf", outcomes)
    for o in outcomes:
        verdict = "pass" if o.passed else "FAIL"
        print(
            f"{verdict:4s}  {o.problem.key:36s} error {o.error:.2e}  "
            f"tolerance {o.problem.tolerance:.0e}"
        )
        if o.message:
            print(f"      {o.message}")
    failed = sum(not o.passed for o in outcomes)
    print(f"\n{len(outcomes) - failed} of {len(outcomes)} problems pass; wrote {path}")
    return 1 if failed else 0


def cmd_check(args: argparse.Namespace) -> int:
    """Model summary, modes and every check; exit 1 if a check refuses a method."""
    from thist.analysis import prepare
    from thist.case import load_case
    from thist.record import summarize

    case = load_case(args.case)
    s = case.structure
    du = case.display
    pre = prepare(case, _methods_arg(args.method))
    modes, damping = pre.modes, pre.damping
    rs = summarize(pre.motion.record)
    print(f"thist {__version__}: {case.title}")
    print(
        f"model: {s.form}, {s.n} levels, total mass {du.show(s.total_mass, 'mass'):.5g} "
        f"{du.label('mass')}, damping {damping.description}"
    )
    print(
        f"record: {Path(case.record.source).name}, {rs.npts} points, dt {rs.dt:g} s, "
        f"duration {rs.duration:g} s, PGA {du.show(rs.pga, 'acceleration'):.4g} "
        f"{du.label('acceleration')}"
    )
    for step in pre.motion.processing:
        print(f"processing: {step.text}")
    if pre.motion.scaling is not None:
        print(
            f"scaling: factor {pre.motion.scaling.factor:.4g} to the "
            f"{pre.motion.scaling.target.describe()}"
        )
    print("\nmode  period [s]  freq [Hz]  participation  eff. mass [%]  cumulative [%]  damping")
    for j in range(s.n):
        print(
            f"{j + 1:4d}  {modes.periods[j]:10.4f}  {modes.frequencies[j]:9.3f}  "
            f"{modes.participation[j]:13.4g}  {100 * modes.effective_mass_ratio[j]:13.2f}  "
            f"{100 * modes.cumulative_ratio[j]:14.2f}  {damping.ratios[j]:7.4f}"
        )
    for spec, c in zip(pre.specs, pre.checks, strict=True):
        print(f"\n{spec.label} at dt = {c.dt:g} s")
        for chk in c.checks:
            print(f"  [{chk.verdict}] {chk.message}")
    print("\n" + cautions.SHORT)
    return 1 if any(c.refused for c in pre.checks) else 0


COMMANDS: dict[str, tuple[Handler, str]] = {
    "run": (cmd_run, "analyse a case; write results.json, histories.csv and report.pdf"),
    "check": (cmd_check, "show the model, its modes and every time-step check"),
    "compare": (cmd_compare, "run several methods and time steps on one case; compare them"),
    "verify": (cmd_verify, "run the benchmark problems; write a verification summary"),
}


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``thist`` command."""
    p = argparse.ArgumentParser(
        prog="thist",
        description="Time-history analysis of lumped-mass structures on a shaking base. "
        + cautions.SHORT,
    )
    p.add_argument("--version", action="version", version=f"thist {__version__}")
    p.add_argument("--debug", action="store_true", help="show the traceback on errors")
    sub = p.add_subparsers(dest="command", required=True)
    for name, (_, help_text) in COMMANDS.items():
        sp = sub.add_parser(name, help=help_text, description=help_text)
        sp.add_argument(
            "--debug",
            action="store_true",
            default=argparse.SUPPRESS,
            help="show the traceback on errors",
        )
        if name in ("run", "check"):
            sp.add_argument("case", help="case file (TOML)")
            sp.add_argument(
                "--method",
                action="append",
                metavar="NAME",
                help="method(s) to use instead of the case's (repeat or comma-separate)",
            )
        if name == "compare":
            sp.add_argument("case", help="case file (TOML)")
            sp.add_argument(
                "--methods",
                action="append",
                required=True,
                metavar="A,B,C",
                help="methods to compare (comma-separated; exact is added for linear models)",
            )
            sp.add_argument(
                "--dt",
                nargs="+",
                metavar="VALUE",
                help='analysis step(s), e.g. 0.005 or "5 ms" (default: the case\'s)',
            )
        if name in ("run", "compare"):
            sp.add_argument(
                "-o", "--output", metavar="DIR", help="output folder (default reports/<case name>/)"
            )
        if name == "verify":
            sp.add_argument(
                "-o",
                "--output",
                metavar="DIR",
                help="output folder (default reports/verification/)",
            )
    return p


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``thist`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    debug = getattr(args, "debug", False)
    handler = COMMANDS[args.command][0]
    try:
        return handler(args)
    except (InputError, StabilityError) as exc:
        if debug:
            traceback.print_exc()
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("error: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
