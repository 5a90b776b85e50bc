"""The ``thist`` command.

Subcommands: ``run`` (analyse a case and write results and the report),
``check`` (model, modes and every time-step check, no integration), ``compare``
(several methods and steps on one case), ``verify`` (benchmark problems),
``spectrum`` (response spectra of a record or of a case's analysed record),
``synth`` (a synthetic record file for trials).
Bad input or a refused time step is one line on stderr and exit status 2;
``--debug`` shows the traceback.
"""

from __future__ import annotations

import argparse
import os
import sys
import traceback
from collections.abc import Callable, Sequence
from pathlib import Path

from thist import __version__, cautions
from thist.batch import command as study_command
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


def cmd_spectrum(args: argparse.Namespace) -> int:
    """Response spectra of a record or a case's analysed record: CSV, JSON and PNG."""
    from thist import spectrum_output as so

    source = so.load_source(
        args.source,
        unit=args.unit,
        layout=args.layout,
        dt=args.dt,
        columns=args.columns,
        header_lines=args.header_lines,
        scale=args.scale,
        display_unit=args.display_unit,
    )
    spec = so.compute(source, so.parse_periods(args.periods), so.parse_damping(args.damping))
    outdir = Path(args.output) if args.output else Path("reports") / Path(args.source).stem
    files = so.write_spectrum_files(outdir, spec, source)
    print("\n".join(so.summary_lines(spec, source)))
    print("\n" + cautions.SHORT)
    print("\nwrote " + ", ".join(str(f) for f in files))
    return 0


def cmd_synth(args: argparse.Namespace) -> int:
    """Write a synthetic record file; say plainly that it is no recorded motion."""
    from thist import synth_output as sy
    from thist.units import DisplayUnits

    opts = {k: getattr(args, k) for k in _SYNTH_OPTIONS}
    synthetic = sy.make_synthetic(seed=args.seed, **opts)
    path = sy.write_synthetic(args.file, synthetic)
    print("\n".join(sy.summary_lines(path, synthetic, DisplayUnits())))
    return 0


def _spectrum_arguments(sp: argparse.ArgumentParser) -> None:
    sp.add_argument(
        "source",
        metavar="RECORD-or-CASE",
        help="a record file, or a case file (*.toml): its processed and scaled record",
    )
    sp.add_argument(
        "--damping",
        metavar="Z1,Z2",
        help='damping ratio(s), e.g. 0.02,0.05 or "5 %%" (default 0.05)',
    )
    sp.add_argument(
        "--periods",
        metavar="LIST-or-RANGE",
        help="periods: a comma list (s, or with a unit: 0.1,0.5,1) or a log-spaced "
        "range START:STOP:COUNT (default 0.02:10:200)",
    )
    sp.add_argument(
        "--display-unit",
        metavar="UNIT",
        help="acceleration unit of the plot (default: the case's, else g)",
    )
    rec = sp.add_argument_group("record file only (a case file states its own)")
    rec.add_argument("--unit", help='acceleration unit of the values, e.g. g, "cm/s^2" (required)')
    rec.add_argument(
        "--layout",
        choices=("columns", "values"),
        default="columns",
        help="time and acceleration columns, or values only (default columns)",
    )
    rec.add_argument("--dt", metavar="TIME", help='step of a values-only file, e.g. "0.01 s"')
    rec.add_argument(
        "--columns",
        metavar="TIME,ACCEL",
        help="time and acceleration columns by name or position (default 1,2)",
    )
    rec.add_argument(
        "--header-lines",
        type=int,
        default=0,
        metavar="N",
        help="lines skipped at the top (default 0)",
    )
    rec.add_argument("--scale", type=float, default=1.0, help="factor on every value (default 1)")
    sp.add_argument("-o", "--output", metavar="DIR",
                    help="output folder (default reports/<file name>/)")  # fmt: skip


#: Text options of ``thist synth`` passed on to thist.synth_output.make_synthetic.
_SYNTH_OPTIONS = ("duration", "dt", "site_frequency", "site_damping", "corner_frequency",
                  "corner_damping", "envelope", "shape_exponent", "peak_time", "rise", "strong",
                  "decay", "pga", "arias", "baseline_order")  # fmt: skip


def _synth_arguments(sp: argparse.ArgumentParser) -> None:
    from thist.synth_output import ENVELOPES

    sp.add_argument("file", metavar="FILE", help="record file to write (text, two columns)")
    req = sp.add_argument_group("required (every dimensional value with its unit)")
    req.add_argument("--seed", type=int, required=True, help="seed of the random generator")
    req.add_argument("--duration", required=True, metavar="TIME", help='e.g. "30 s"')
    req.add_argument("--dt", required=True, metavar="TIME", help='e.g. "0.01 s"')
    req.add_argument(
        "--site-frequency",
        required=True,
        metavar="FREQ",
        help='Kanai-Tajimi site frequency, e.g. "2 Hz" or "12.6 rad/s"',
    )
    req.add_argument(
        "--site-damping",
        required=True,
        metavar="RATIO",
        help='Kanai-Tajimi site damping ratio, e.g. 0.6 or "60 %%"',
    )
    target = req.add_mutually_exclusive_group(required=True)
    target.add_argument("--pga", metavar="ACCEL", help='target PGA, e.g. "0.3 g"')
    target.add_argument("--arias", metavar="VELOCITY", help='target Arias intensity, "1.2 m/s"')
    opt = sp.add_argument_group("optional")
    opt.add_argument(
        "--corner-frequency",
        metavar="FREQ",
        help='Clough-Penzien high-pass corner, e.g. "0.2 Hz" (with --corner-damping)',
    )
    opt.add_argument("--corner-damping", metavar="RATIO", help="Clough-Penzien damping ratio")
    opt.add_argument(
        "--envelope",
        choices=ENVELOPES,
        default="saragoni-hart",
        help="time envelope (default saragoni-hart)",
    )
    opt.add_argument(
        "--peak-time",
        metavar="TIME",
        help="saragoni-hart: time of the envelope peak (required for it)",
    )
    opt.add_argument("--shape-exponent", metavar="B", help="saragoni-hart: exponent b (default 2)")
    opt.add_argument("--rise", metavar="TIME", help="trapezoid: rise time")
    opt.add_argument("--strong", metavar="TIME", help="trapezoid: strong-phase duration")
    opt.add_argument("--decay", metavar="TIME", help="trapezoid: decay time")
    opt.add_argument("--baseline-order", default="1", metavar="0-3|none",
                     help="baseline correction of the result (default 1)")  # fmt: skip


COMMANDS: dict[str, tuple[Handler, str]] = {
    "run": (cmd_run, "analyse a case; write results.json, histories.csv and report.pdf"),
    "check": (cmd_check, "show the model, its modes and every time-step check"),
    "compare": (cmd_compare, "run several methods and time steps on one case; compare them"),
    "verify": (cmd_verify, "run the benchmark problems; write a verification summary"),
    "spectrum": (
        cmd_spectrum,
        "response spectra of a record or a case's analysed record; write CSV, JSON and PNG",
    ),
    "synth": (
        cmd_synth,
        "write a synthetic record (Kanai-Tajimi filtered noise) for demonstrations and trial "
        "runs; synthetic motions are not a substitute for recorded motions selected for the site",
    ),
    "study": (study_command.cmd_study, study_command.HELP),
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
        if name == "spectrum":
            _spectrum_arguments(sp)
        if name == "synth":
            _synth_arguments(sp)
        if name == "study":
            study_command.add_arguments(sp)
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
    except BrokenPipeError:
        # The reader of our output went away (e.g. `thist run ... | head`): stop quietly.
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
