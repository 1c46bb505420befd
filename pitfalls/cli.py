"""The command line: the only module that prints or exits.

Exit codes: 0 the scan ran and no finding reached ``--gate``; 1 a finding reached it or a
detector failed; 2 bad input or usage (one line on stderr, no traceback); 130 stopped by
SIGINT and 143 by SIGTERM (one line, no traceback, no temporary file left beside an output).
The heavy modules (numpy, scipy, rich, the detectors) are imported inside :func:`main`, so
an interruption while they load is handled like any other.
"""
from __future__ import annotations

import argparse
import io
import json
import os
import signal
import sys
import warnings
from typing import TYPE_CHECKING, Sequence

from pitfalls import __version__
from pitfalls.errors import PitfallsInputError
from pitfalls.io.output import check_output_folder, check_run_paths, write_whole

if TYPE_CHECKING:
    from rich.console import Console

EXIT_OK, EXIT_FINDINGS, EXIT_INPUT = 0, 1, 2
EXIT_SIGINT, EXIT_SIGTERM = 130, 143
RULES_HELP = "YAML rules overriding any subset of the built-in defaults (a copy is rules/default.yaml in the repository)"


class Terminated(BaseException):
    """SIGTERM arrived: unwinds like KeyboardInterrupt, so temporary files are removed on the way out."""


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage mistakes on one line with exit code 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise PitfallsInputError("command line", "", message, f"see `{self.prog} --help`")


def _registry():
    """The detector registry, imported when a command needs it (it loads numpy and scipy)."""
    from pitfalls import detectors
    return detectors


def build_parser() -> argparse.ArgumentParser:
    registry = _registry()
    parser = _Parser(prog="pitfalls", description=(
        "Screen seismic interpretation picks on a post-stack SEG-Y section for physical pitfalls "
        "(multiples, false fluid contacts, cross-cutting boundaries, pick errors)."))
    parser.add_argument("--version", action="version", version=f"pitfalls {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    scan = commands.add_parser("scan", help="scan a SEG-Y section and its picks, print the ranked report")
    scan.add_argument("section", metavar="SECTION", help="post-stack SEG-Y file (2-D line or 3-D volume)")
    scan.add_argument("--picks", action="append", default=[], metavar="FILE", help="pick file (CSV); repeatable")
    scan.add_argument("--columns", metavar="NAMES",
                      help="the pick files' columns in order, - to skip one (a file without a header row): "
                           "horizon, trace, cdp, shotpoint, inline, xline, x, y, twt_ms, twt_s, depth_m, kind")
    scan.add_argument("--velocity", metavar="FILE", help="velocity function for every depth: YAML, or a two-column "
                                                         "table of two-way time below the seafloor and velocity")
    scan.add_argument("--horizon", metavar="NAME", help="horizon name for pick files without a horizon column "
                                                        "(default: the file's name)")
    scan.add_argument("--rules", metavar="FILE", help=RULES_HELP)
    scan.add_argument("--format", choices=("terminal", "json", "markdown"), default="terminal")
    scan.add_argument("--output", metavar="FILE", help="write the report here instead of stdout")
    scan.add_argument("--annotated-picks", metavar="FILE.csv", help="write the pick rows back with their findings")
    scan.add_argument("--figure", metavar="FILE.png", help="draw the section, picks and findings (needs matplotlib)")
    scan.add_argument("--figure-colours", metavar="NAME",
                      help="matplotlib colour map for the section in --figure (default gray_r: grey, the seafloor "
                           "reflection's sign dark)")
    scan.add_argument("--map", metavar="FILE.png",
                      help="3-D: draw each horizon's time map with the findings' footprints (needs matplotlib)")
    scan.add_argument("--geojson", metavar="FILE",
                      help="write the findings' footprints as GeoJSON in the survey's CDP X/Y")
    scan.add_argument("--accepted", metavar="FILE.yaml",
                      help="findings a reviewer accepted (fingerprint, reason, by, date): shown as accepted, not gated")
    scan.add_argument("--write-accepted", metavar="FILE.yaml",
                      help="write a starting accepted-findings file with every finding of this scan commented out")
    scan.add_argument("--detail", choices=("top", "all"), default="top",
                      help="evidence panels for findings at medium and above (top, default) or for every finding (all)")
    scan.add_argument("--gate", choices=("high", "medium", "low", "off"), default="high",
                      help="exit 1 when a finding is at least this severe (default high; off: only a failed "
                           "detector exits 1)")
    scan.add_argument("--iline-byte", type=int, metavar="N", help="trace-header byte of the inline number (default 189)")
    scan.add_argument("--xline-byte", type=int, metavar="N", help="trace-header byte of the crossline number (default 193)")
    scan.add_argument("--2d", dest="force_2d", action="store_true", help="read the file as a 2-D line in trace order")
    scan.add_argument("--only", metavar="DETECTOR,...", help="run only these detectors: " + ", ".join(registry.BY_NAME))
    scan.add_argument("--quiet", action="store_true", help="print no report on stdout (files and exit code only)")
    scan.add_argument("--jobs", type=int, metavar="N",
                      help="worker processes for the blocks of a 3-D volume (default: the machine's cores)")

    describe = commands.add_parser("describe", help="measure the character of each interval between the picks and along each pick")
    describe.add_argument("section", metavar="SECTION", help="post-stack SEG-Y file (2-D line or 3-D volume)")
    describe.add_argument("--picks", action="append", default=[], required=True, metavar="FILE",
                          help="pick file (CSV); repeatable; the intervals lie between consecutive horizons")
    describe.add_argument("--rules", metavar="FILE", help="YAML rules overriding rules/default.yaml")
    describe.add_argument("--format", choices=("terminal", "json", "markdown"), default="terminal")
    describe.add_argument("--output", metavar="FILE", help="write the description here instead of stdout")
    describe.add_argument("--iline-byte", type=int, metavar="N", help="trace-header byte of the inline number (default 189)")
    describe.add_argument("--xline-byte", type=int, metavar="N", help="trace-header byte of the crossline number (default 193)")
    describe.add_argument("--2d", dest="force_2d", action="store_true", help="read the file as a 2-D line in trace order")

    project = commands.add_parser("project", help="scan every section of a project file and tie them where they cross")
    project.add_argument("project", metavar="PROJECT.yaml", help="project file listing the sections and their picks")
    project.add_argument("--format", choices=("terminal", "json", "markdown"), default="terminal")
    project.add_argument("--output", metavar="FILE", help="write the report here instead of stdout")
    project.add_argument("--gate", choices=("high", "medium", "low", "off"), default="high",
                         help="exit 1 when a finding is at least this severe (default high; off never fails on findings)")
    project.add_argument("--jobs", type=int, default=os.cpu_count() or 1, metavar="N",
                         help="worker processes, or Dask workers with --scheduler local (default: the machine's cores)")
    project.add_argument("--scheduler", metavar="ADDRESS|local",
                         help="run the sections on the Dask scheduler at ADDRESS, or on a new local Dask cluster "
                              '(needs pip install -e ".[dask]")')

    demo = commands.add_parser("demo", help="write the bundled demo scenario, then scan it")
    demo.add_argument("--out", metavar="DIR", default="pitfalls-demo", help="folder for the demo files (default ./pitfalls-demo)")

    rules = commands.add_parser("rules", help="print the active rules, defaults merged, validated")
    rules.add_argument("--rules", metavar="FILE", help=RULES_HELP)

    explain = commands.add_parser("explain", help="what a finding means, why it matters, what to check")
    explain.add_argument("finding_id", nargs="?", metavar="FINDING_ID")
    explain.add_argument("--list", action="store_true", help="list every finding id")
    return parser


def write_atomically(path: str, text: str | bytes) -> None:
    """Write the whole file or nothing: a temporary file in the same folder, then a rename."""
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise PitfallsInputError(path, "", "its folder does not exist", "create the folder or choose another path")
    data = text.encode("utf-8") if isinstance(text, str) else text
    write_whole(path, lambda temporary: temporary.write_bytes(data))


def _load_rules(path: str | None):
    from pitfalls.io.rules import load_rules
    return load_rules(path, _registry().rule_keys())


def _report_text(report, fmt: str, width: int = 120, detail: str = "top") -> str:
    """A scan report as text in one of the ``--format`` forms: the report object's own views (the terminal
    form with the ``--detail`` asked for)."""
    if fmt == "json":
        return report.to_json()
    if fmt == "markdown":
        return report.to_markdown()
    return report.to_text(width, detail)


def _scan(args: argparse.Namespace, stdout: Console) -> int:
    import pitfalls
    if args.force_2d and (args.iline_byte or args.xline_byte):
        raise PitfallsInputError("command line", "", "--2d cannot be combined with --iline-byte/--xline-byte",
                                 "use --2d for a line, or the byte options for a 3-D volume")
    if args.annotated_picks and not args.picks:
        raise PitfallsInputError("--annotated-picks", "", "needs at least one --picks file", "add --picks FILE")
    check_run_paths(inputs={"SECTION": args.section, "--picks": args.picks, "--rules": args.rules,
                            "--velocity": args.velocity, "--accepted": args.accepted},
                    outputs={"--output": args.output, "--annotated-picks": args.annotated_picks,
                             "--figure": args.figure, "--map": args.map, "--geojson": args.geojson,
                             "--write-accepted": args.write_accepted},
                    repeatable=("--picks",))
    if args.figure or args.map:
        from pitfalls.report.figure import require_matplotlib
        require_matplotlib()
    if args.figure_colours and not args.figure:
        raise PitfallsInputError("--figure-colours", "", "colours a figure, but no --figure was asked for",
                                 "add --figure FILE.png, or leave out --figure-colours")
    if args.figure_colours:
        from pitfalls.report.figure import check_colour_map
        check_colour_map(args.figure_colours)
    options = dict(picks=args.picks, rules=args.rules, only=args.only, jobs=_jobs(args.jobs),
                   iline_byte=args.iline_byte, xline_byte=args.xline_byte, force_2d=args.force_2d,
                   columns=args.columns, horizon=args.horizon, velocity=args.velocity, accepted=args.accepted)
    if sys.stderr.isatty():
        with _progress_bar() as progress:
            report = pitfalls.scan(args.section, progress=progress, **options)
    else:
        report = pitfalls.scan(args.section, **options)
    result = report.scan_result
    _emit(report, args.format, args.output, args.quiet, stdout, args.detail)
    if args.write_accepted:
        write_atomically(args.write_accepted, report.accepted_template())
    if args.annotated_picks:
        from pitfalls.report.annotated import render as render_annotated
        write_atomically(args.annotated_picks, render_annotated(result))
    if args.figure:
        write_atomically(args.figure, report.figure_png(args.figure_colours))
    if args.map:
        if result.map_view is None:
            raise PitfallsInputError("--map", "", f"{args.section} is a 2-D line; a map needs a 3-D volume",
                                     "use --figure for a line")
        from pitfalls.report.map_figure import draw_map
        write_atomically(args.map, draw_map(result))
    if args.geojson:
        from pitfalls.report.geojson import feature_collection
        if result.coordinates is None or not result.coordinates.from_headers:
            raise PitfallsInputError(args.section, "trace header bytes 181/185",
                                     "hold no CDP X/Y coordinates, so the findings have no place on a map",
                                     "write the coordinates into the SEG-Y headers, or leave out --geojson")
        collection = feature_collection(result.findings, result.coordinates, args.section)
        write_atomically(args.geojson, json.dumps(collection, indent=1) + "\n")
    return EXIT_OK if report.passes(args.gate) else EXIT_FINDINGS


def _byte(given: int | None, default: int) -> int:
    """The header byte option, or its default when not given (0 is a value, refused by the reader)."""
    return default if given is None else given


def _jobs(requested: int | None) -> int:
    """Worker processes: as asked, else one per core the process may use."""
    if requested is None:
        from pitfalls import default_jobs
        return default_jobs()
    if requested < 1:
        raise PitfallsInputError("--jobs", "", f"is {requested}", "give a whole number of worker processes, 1 or more")
    return requested


class _progress_bar:
    """A transient progress bar on stderr: panels (inlines) done, samples per second, time left."""

    def __enter__(self):
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeRemainingColumn
        self._bar = Progress(TextColumn("scanning"), BarColumn(), MofNCompleteColumn(), TextColumn("panels"),
                             TextColumn("{task.fields[rate]}"), TimeRemainingColumn(),
                             console=Console(stderr=True), transient=True)
        self._bar.__enter__()
        self._task = self._bar.add_task("scan", total=None, rate="")
        return self

    def __call__(self, done: int, total: int, samples: int = 0) -> None:
        elapsed = self._bar.tasks[0].elapsed or 0.0
        rate = f"{samples / elapsed / 1e6:.1f} Msamples/s" if samples and elapsed > 0 else ""
        self._bar.update(self._task, completed=done, total=total, rate=rate)

    def __exit__(self, *exc: object) -> None:
        self._bar.__exit__(*exc)


def _emit(report, fmt: str, output: str | None, quiet: bool, stdout: Console, detail: str = "top") -> None:
    if output:
        write_atomically(output, _report_text(report, fmt, detail=detail))
        return
    if quiet:
        return
    if fmt == "terminal":
        from pitfalls.report.terminal import render
        stdout.print(render(report.scan_result, detail))
    else:
        sys.stdout.write(_report_text(report, fmt))
        sys.stdout.flush()


def _describe(args: argparse.Namespace, stdout: Console) -> int:
    from rich.console import Console

    from pitfalls.describe import describe_file
    from pitfalls.report import description as report
    if args.force_2d and (args.iline_byte or args.xline_byte):
        raise PitfallsInputError("command line", "", "--2d cannot be combined with --iline-byte/--xline-byte",
                                 "use --2d for a line, or the byte options for a 3-D volume")
    check_run_paths(inputs={"SECTION": args.section, "--picks": args.picks, "--rules": args.rules},
                    outputs={"--output": args.output}, repeatable=("--picks",))
    rules, rules_path, rules_sha = _load_rules(args.rules)
    description = describe_file(args.section, args.picks, rules, _byte(args.iline_byte, 189),
                                _byte(args.xline_byte, 193), args.force_2d)
    if args.format == "json":
        text = json.dumps(report.description_dict(description, rules_path, rules_sha), indent=2) + "\n"
    elif args.format == "markdown":
        text = report.render_markdown(description)
    else:
        buffer = io.StringIO()
        Console(file=buffer, width=120, color_system=None, force_terminal=False).print(report.render_terminal(description))
        text = buffer.getvalue()
    if args.output:
        write_atomically(args.output, text)
    elif args.format == "terminal":
        stdout.print(report.render_terminal(description))
    else:
        sys.stdout.write(text)
        sys.stdout.flush()
    return EXIT_OK


def _project(args: argparse.Namespace, stdout: Console) -> int:
    from pitfalls.io.project import read_project
    from pitfalls.io.scheduler import open_runner
    from pitfalls.project import run_project
    from pitfalls.report import project as project_report
    project = read_project(args.project)
    rules, rules_path, rules_sha = _load_rules(project.rules_path)
    check_run_paths(inputs={"PROJECT": args.project, "rules": project.rules_path,
                            "section": [entry.path for entry in project.sections],
                            "picks": [p for entry in project.sections for p in entry.pick_paths],
                            "velocity": [entry.velocity_path for entry in project.sections if entry.velocity_path]},
                    outputs={"--output": args.output})
    with open_runner(args.jobs, args.scheduler) as runner:
        result = run_project(project, rules, rules_path, rules_sha, runner)
    if args.format == "json":
        text = json.dumps(project_report.report_dict(result), indent=2) + "\n"
    elif args.format == "markdown":
        text = project_report.render_markdown(result)
    else:
        from rich.console import Console
        buffer = io.StringIO()
        Console(file=buffer, width=120, color_system=None, force_terminal=False).print(
            project_report.render_terminal(result))
        text = buffer.getvalue()
    if args.output:
        write_atomically(args.output, text)
    elif args.format == "terminal":
        stdout.print(project_report.render_terminal(result))
    else:
        sys.stdout.write(text)
        sys.stdout.flush()
    if result.failed or result.reaches(args.gate):
        return EXIT_FINDINGS
    return EXIT_OK


def _demo(args: argparse.Namespace, stdout: Console) -> int:
    import pitfalls
    from pitfalls.modelling.demo import write_demo
    check_output_folder(args.out, "--out")
    os.makedirs(args.out, exist_ok=True)
    written = write_demo(args.out)
    report = pitfalls.scan(written["segy"], picks=[written["picks"]])
    stdout.print(report)
    figure_note = ""
    try:
        figure_path = os.path.join(args.out, "demo_figure.png")
        write_atomically(figure_path, report.figure_png())
        figure_note = f", figure {figure_path}"
    except PitfallsInputError as err:
        figure_note = f" (no figure: {err.problem})"
    stdout.print(f"Demo files in {args.out}: section {written['segy']}, picks {written['picks']}, "
                 f"truth {written['truth']}{figure_note}. Scan them yourself with:\n"
                 f"  pitfalls scan {written['segy']} --picks {written['picks']}")
    return EXIT_FINDINGS if report.failed else EXIT_OK


def _rules(args: argparse.Namespace) -> int:
    from pitfalls import load_rules
    rules = load_rules(args.rules)
    rules_path = rules.path
    if args.rules:
        sys.stdout.write(f"# active rules: {rules_path} merged over the built-in defaults\n")
    else:
        sys.stdout.write(f"# active rules: {rules_path}\n")
    sys.stdout.write(rules.to_yaml())
    return EXIT_OK


def _explain(args: argparse.Namespace, stdout: Console) -> int:
    kinds = _registry().finding_kinds()
    if args.list or not args.finding_id:
        for finding_id, (detector, (meaning, _, _)) in kinds.items():
            stdout.print(f"{finding_id:34s} {meaning}", highlight=False)
        return EXIT_OK
    from rich.text import Text

    from pitfalls import explain
    text = explain(args.finding_id)
    stdout.print(Text.assemble((args.finding_id, "bold"), text[len(args.finding_id):]), highlight=False)
    return EXIT_OK


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (also used by ``python -m pitfalls``)."""
    arguments = sys.argv[1:] if argv is None else list(argv)
    if arguments == ["--version"]:  # answered before numpy, scipy or rich are loaded
        print(f"pitfalls {__version__}")
        return EXIT_OK
    previous = _catch_sigterm()
    try:
        with warnings.catch_warnings():
            # stderr carries progress and the one error line only: numerical warnings from damaged
            # data are not the user's business (NaN results are handled where they are used).
            warnings.simplefilter("ignore", RuntimeWarning)
            return _run(arguments)
    except PitfallsInputError as err:
        sys.stdout.flush()
        print(f"pitfalls: error: {err.one_line()}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        _stopped("interrupted (SIGINT)")
        return EXIT_SIGINT
    except Terminated:
        _stopped("terminated (SIGTERM)")
        return EXIT_SIGTERM
    except Exception as err:
        # A signal that lands inside a compiled library's start-up can come out as that library's
        # ImportError (or other error) with the interruption in its chain: still an interruption.
        stop = _interruption_in(err)
        if stop is None:
            raise
        _stopped("interrupted (SIGINT)" if stop is KeyboardInterrupt else "terminated (SIGTERM)")
        return EXIT_SIGINT if stop is KeyboardInterrupt else EXIT_SIGTERM
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


def _run(arguments: Sequence[str]) -> int:
    import numpy as np
    from rich.console import Console
    with np.errstate(all="ignore"):
        stdout = Console(highlight=False)
        args = build_parser().parse_args(arguments)
        if args.command == "scan":
            return _scan(args, stdout)
        if args.command == "describe":
            return _describe(args, stdout)
        if args.command == "demo":
            return _demo(args, stdout)
        if args.command == "project":
            return _project(args, stdout)
        if args.command == "rules":
            return _rules(args)
        if args.command == "explain":
            return _explain(args, stdout)
        build_parser().print_help()
        return EXIT_INPUT


def _interruption_in(err: BaseException) -> type | None:
    """KeyboardInterrupt or Terminated when either is in ``err``'s chain of causes, else None."""
    seen: set[int] = set()
    current: BaseException | None = err
    while current is not None and id(current) not in seen:
        seen.add(id(current))
        if isinstance(current, KeyboardInterrupt):
            return KeyboardInterrupt
        if isinstance(current, Terminated):
            return Terminated
        current = current.__cause__ or current.__context__
    return None


def _raise_terminated(signum: int, frame: object) -> None:
    raise Terminated()


def _catch_sigterm():
    """Turn SIGTERM into :class:`Terminated` for this run; the previous handler, or None off the main thread."""
    try:
        return signal.signal(signal.SIGTERM, _raise_terminated)
    except (ValueError, OSError):
        return None


def _stopped(how: str) -> None:
    try:
        sys.stdout.flush()
    except (OSError, ValueError):
        pass
    print(f"pitfalls: {how}; stopped, no partly written file left", file=sys.stderr)


def entry_point() -> None:
    sys.exit(exit_code(main()))


def exit_code(code: int) -> int:
    """``code`` for ``sys.exit``; a run stopped by a signal leaves at once with 130/143.

    The interpreter would otherwise report a SIGINT that arrived inside some library's start-up
    code as a death by signal, whatever code the program chose.
    """
    if code in (EXIT_SIGINT, EXIT_SIGTERM):
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (OSError, ValueError):
                pass
        os._exit(code)
    return code
