"""The ``thist`` command.

Subcommands: ``run`` (analyse a case and write results), ``check`` (model,
modes and every time-step check, no integration). Bad input or a refused time
step is one line on stderr and exit status 2; ``--debug`` shows the traceback.
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
    """Run a case: results.json, histories.csv and a terminal summary."""
    from thist.analysis import run_case
    from thist.case import load_case
    from thist.results import summary_text, write_results

    case = load_case(args.case)
    result = run_case(case, methods=_methods_arg(args.method))
    outdir = Path(args.output) if args.output else _default_outdir(args.case)
    files = write_results(result, outdir)
    print(summary_text(result))
    print("\nwrote " + ", ".join(str(f) for f in files))
    return 0


def cmd_check(args: argparse.Namespace) -> int:
    """Model summary, modes and every check; exit 1 if a check refuses a method."""
    from thist.analysis import build_damping
    from thist.case import load_case, parse_method_entry
    from thist.checks import check_method
    from thist.modal import modal
    from thist.record import sample, summarize

    case = load_case(args.case)
    s = case.structure
    du = case.display
    modes = modal(s.M, s.K, s.r)
    damping = build_damping(case.damping, s, modes)
    step = case.analysis.dt or case.record.dt
    ex = sample(case.record, step, case.analysis.duration, case.analysis.allow_coarse_dt)
    rs = summarize(case.record)
    names = _methods_arg(args.method)
    specs = (
        case.analysis.methods
        if names is None
        else [parse_method_entry(m, f"--method {m}", None) for m in names]
    )
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
    print("\nmode  period [s]  freq [Hz]  participation  eff. mass [%]  cumulative [%]  damping")
    for j in range(s.n):
        print(
            f"{j + 1:4d}  {modes.periods[j]:10.4f}  {modes.frequencies[j]:9.3f}  "
            f"{modes.participation[j]:13.4g}  {100 * modes.effective_mass_ratio[j]:13.2f}  "
            f"{100 * modes.cumulative_ratio[j]:14.2f}  {damping.ratios[j]:7.4f}"
        )
    refused = False
    for spec in specs:
        c = check_method(
            spec.method,
            spec.label,
            modes,
            damping.ratios,
            ex.dt,
            case.record.dt,
            case.checks.mass_ratio,
            case.checks.steps_per_period,
        )
        refused |= c.refused
        print(f"\n{spec.label} at dt = {ex.dt:g} s")
        for chk in c.checks:
            print(f"  [{chk.verdict}] {chk.message}")
    print("\n" + cautions.SHORT)
    return 1 if refused else 0


COMMANDS: dict[str, tuple[Handler, str]] = {
    "run": (cmd_run, "analyse a case; write results.json and histories.csv"),
    "check": (cmd_check, "show the model, its modes and every time-step check"),
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
        if name == "run":
            sp.add_argument(
                "-o", "--output", metavar="DIR", help="output folder (default reports/<case name>/)"
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
