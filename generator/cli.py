"""Command line: ``python -m generator <command>`` (also installed as ``almanac``).

Exit status of ``check``: 0 every entry verified, 1 some entry failed a check, 2 bad usage or
unreadable input.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from pathlib import Path

from generator import __version__
from generator.argv import join_dash_values
from generator.errors import AlmanacError, UsageError, printable

EXIT_OK, EXIT_FAILED, EXIT_USAGE = 0, 1, 2
DEFAULT_CACHE = Path(".almanac-cache")


def _add_run_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--jobs", type=int, default=0,
                        help="worker processes (default: all cores)")
    parser.add_argument("--seconds", type=float, default=300.0,
                        help="time budget per entry in seconds (default 300)")
    parser.add_argument("--cache-dir", type=Path, default=DEFAULT_CACHE,
                        help="folder of cached results (default .almanac-cache)")
    parser.add_argument("--no-cache", action="store_true", help="recompute everything")
    parser.add_argument("--scheduler", metavar="ADDRESS",
                        help="spread entries over a Dask distributed scheduler (tcp://host:port)")
    parser.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                        help="show a progress bar naming the entries being checked (default: "
                        "when standard error is a terminal)")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="almanac", description="Metric Almanac: verify and "
                                     "publish a catalog of spacetime metrics.")
    parser.add_argument("--version", action="version", version=f"almanac {__version__}")
    commands = parser.add_subparsers(dest="command", required=True)

    check = commands.add_parser("check", help="verify entries and explain every mistake")
    check.add_argument("paths", nargs="*", type=Path,
                       help="entry files or folders (default: catalog); '-' reads one entry "
                       "from standard input")
    check.add_argument("--json", action="store_true", help="print the JSON report")
    check.add_argument("--format", choices=("text", "github", "json"), default="text",
                       help="diagnostic format (github: workflow annotations)")
    check.add_argument("--show-computed", action="store_true",
                       help="print what was computed, as YAML to compare with the paper")
    check.add_argument("--changed-since", metavar="REF",
                       help="check only entries changed since this git ref")
    _add_run_options(check)

    build = commands.add_parser("build", help="check the catalog and write the site")
    build.add_argument("--catalog", type=Path, default=Path("catalog"))
    build.add_argument("--out", type=Path, default=Path("site"))
    build.add_argument("--publish-verified-only", action="store_true",
                       help="write the site with the verified entries even if others failed "
                       "(the exit status still reports the failures)")
    build.add_argument("--prune-cache", action="store_true",
                       help="after the build, delete cached results it did not use (keeps a "
                       "cache that CI saves between runs from growing)")
    build.add_argument("--require-address", action="store_true",
                       help="refuse to build without site_address in the catalog's "
                       "publication.yaml (for the build that is published: its citations then "
                       "carry a permanent address)")
    _add_run_options(build)

    serve = commands.add_parser("serve", help="preview the site locally, rebuilding on change")
    serve.add_argument("--catalog", type=Path, default=Path("catalog"),
                       help="catalog folder to check and preview (default: catalog)")
    serve.add_argument("--out", type=Path, default=Path("site"),
                       help="folder the site is written to (default: site)")
    serve.add_argument("--host", default="127.0.0.1",
                       help="address to listen on (default 127.0.0.1, this machine only; "
                       "0.0.0.0 shows the preview to the whole network)")
    serve.add_argument("--port", type=int, default=8000, help="port (default 8000)")

    listing = commands.add_parser("list", help="list entries with id, family and status")
    listing.add_argument("--catalog", type=Path, default=Path("catalog"),
                         help="catalog folder (default: catalog)")
    listing.add_argument("--family", help="only this family folder")
    listing.add_argument("--tag", help="only entries with this tag")
    listing.add_argument("--status", choices=("verified", "nothing-claimed", "failed"),
                         help="only entries in this state")
    listing.add_argument("--match", metavar="TEXT", help="only ids or titles containing TEXT")
    _add_run_options(listing)

    compute = commands.add_parser(
        "compute", help="compute invariants, matter and Petrov type of a bare metric",
        description="Compute what check computes for a metric given on the command line or "
        "in a small YAML file (keys: coordinates, line_element, parameters, signature, "
        "domain), without writing an entry. Same parser, engine and budget as check.")
    compute.add_argument("file", nargs="?", type=Path,
                         help="YAML file with the metric (instead of the options below)")
    compute.add_argument("--coordinates", help="in index order, e.g. 't, r, theta, phi'")
    compute.add_argument("--metric", help="line element, e.g. '-dt**2 + dx**2'")
    compute.add_argument("--parameters", action="append", default=[],
                         help="'NAME:ASSUME; ...', e.g. 'M:positive' (repeatable)")
    compute.add_argument("--signature", default="", help='e.g. "-+++" (default: Lorentzian '
                         'with one minus sign)')
    compute.add_argument("--domain", action="append", default=[],
                         help="inequality where sample points are taken, e.g. 'r > 2*M'")
    compute.add_argument("--format", choices=("text", "yaml", "json"), default="text",
                         help="output format (default text)")
    compute.add_argument("--seconds", type=float, default=300.0,
                         help="time budget in seconds (default 300, as for check)")

    commands.add_parser("new", help="scaffold a new entry", add_help=False)
    commands.add_parser("cite", help="print a citation of an entry", add_help=False)
    schema = commands.add_parser("schema", help="write schema/entry.schema.json from the "
                                 "declared entry format")
    schema.add_argument("--root", type=Path, default=Path("."), help="project folder")
    schema.add_argument("--docs", action="store_true",
                        help="also refresh the key table in DEVELOPERS.md")
    schema.add_argument("--check", action="store_true",
                        help="write nothing; exit 1 if schema/entry.schema.json is out of date")
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    args_list = list(sys.argv[1:] if argv is None else argv)
    if args_list[:1] == ["new"]:
        from generator.entry.scaffold import new_main

        return new_main(args_list[1:])
    parser = build_parser()
    try:
        if args_list[:1] == ["cite"]:
            from generator.run.citing import cite_main

            return cite_main(args_list[1:])
        args = parser.parse_args(join_dash_values(args_list, parser))
    except SystemExit as exc:
        return EXIT_USAGE if exc.code else EXIT_OK
    except AlmanacError as exc:
        print(f"almanac: error: {exc}", file=sys.stderr)
        return EXIT_USAGE
    try:
        return _dispatch(args)
    except UsageError as exc:
        print(f"almanac: error: {printable(str(exc))}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("almanac: interrupted", file=sys.stderr)
        return 130
    except AlmanacError as exc:
        print(f"almanac: error: {printable(str(exc))}", file=sys.stderr)
        return EXIT_USAGE


def _dispatch(args: argparse.Namespace) -> int:
    if args.command == "check":
        return run_check(args)
    if args.command == "build":
        from generator.entry.catalog import entry_files
        from generator.run.build import build_site

        on_done, on_running = _progress_printer(args, len(entry_files([args.catalog])))
        result = build_site(args.catalog, args.out, _options(args), args.publish_verified_only,
                            on_done, on_running, args.prune_cache,
                            require_address=args.require_address)
        return EXIT_OK if result.ok else EXIT_FAILED
    if args.command == "serve":
        from generator.run.build import serve_site

        serve_site(args.catalog, args.out, args.port, args.host)
        return EXIT_OK
    if args.command == "list":
        from generator.run.listing import Filters, format_rows, list_entries

        rows = list_entries(args.catalog, _options(args),
                            Filters(args.family, args.tag, args.status, args.match))
        print(format_rows(rows))
        return EXIT_OK
    if args.command == "compute":
        return run_compute(args)
    if args.command == "schema":
        from generator.entry.jsonschema_export import main as schema_main
        from generator.entry.jsonschema_export import write_schema

        if args.check:
            return schema_main(["--check", str(args.root)])

        print(write_schema(args.root))
        if args.docs:
            from generator.entry.schema import with_reference_table

            guide = args.root / "DEVELOPERS.md"
            guide.write_text(with_reference_table(guide.read_text(encoding="utf-8")),
                             encoding="utf-8")
            print(guide)
        return EXIT_OK
    raise UsageError(f"unknown command {args.command}")


def _options(args: argparse.Namespace):
    from generator.run.pipeline import RunOptions

    return RunOptions(
        jobs=args.jobs,
        seconds_per_entry=args.seconds,
        cache_dir=None if args.no_cache else args.cache_dir,
        scheduler=args.scheduler,
    )


def run_compute(args: argparse.Namespace) -> int:
    from generator.run.compute import BareMetric, compute_metric, read_metric_file, render_output

    if args.file is not None:
        metric = read_metric_file(args.file)
    elif args.coordinates and args.metric:
        metric = BareMetric(tuple(c.strip() for c in args.coordinates.replace(" ", ",")
                                  .split(",") if c.strip()),
                            args.metric, tuple(args.parameters), args.signature,
                            tuple(args.domain))
    else:
        raise UsageError("give --coordinates and --metric, or a metric file")
    report, diagnostics = compute_metric(metric, args.seconds)
    for diagnostic in diagnostics:
        print(diagnostic.format_text(), file=sys.stderr)
    if report.geometry is None:
        return EXIT_FAILED
    print(render_output(report, args.format))
    return EXIT_OK


def run_check(args: argparse.Namespace) -> int:
    if [str(p) for p in args.paths] == ["-"]:
        return _check_stdin(args)
    from generator.entry.catalog import entry_files, find_catalog_root
    from generator.run.pipeline import check_files

    base = Path.cwd()
    paths = list(args.paths) or [Path("catalog")]
    files = entry_files(paths)
    root = find_catalog_root(paths[0].resolve() if paths[0].is_dir() else
                             paths[0].resolve().parent)
    if args.changed_since:
        from generator.entry.history import changed_entries

        changed = {p.resolve() for p in changed_entries(base, args.changed_since,
                                                       root or Path("catalog"))}
        files = [f for f in files if f.resolve() in changed]
    reports = check_files(files, root, base, _options(args), *_progress_printer(args, len(files)),
                          changed_only=bool(args.changed_since))
    fmt = "json" if args.json else args.format
    _print_reports(reports, fmt, args.show_computed)
    if any(not r.ok for r in reports):
        unreadable = any(d.code.startswith("file.") for r in reports for d in r.diagnostics)
        return EXIT_USAGE if unreadable else EXIT_FAILED
    return EXIT_OK


def _check_stdin(args: argparse.Namespace) -> int:
    """``check -``: one entry from standard input, checked alone (no catalog around it;
    diagnostics name ``<stdin>``)."""
    from generator.run.stdin import check_text

    text = sys.stdin.buffer.read(STDIN_LIMIT + 1)
    report = check_text(text, STDIN_LIMIT, args.seconds)
    _print_reports([report], "json" if args.json else args.format, args.show_computed)
    if report.ok:
        return EXIT_OK
    return EXIT_USAGE if any(d.code.startswith("file.") for d in report.diagnostics) \
        else EXIT_FAILED


STDIN_LIMIT = 256 * 1024  # the same bound as an entry file


def wants_progress(choice: bool | None, stream) -> bool:
    """The bar is on when asked for, and by default on a terminal: someone watching a long
    build sees which entry holds it up, while logs and pipes get no carriage-return noise."""
    if choice is not None:
        return choice
    isatty = getattr(stream, "isatty", None)
    return bool(isatty and isatty())


def _progress_printer(args: argparse.Namespace, total: int):
    """(on_done, on_running) for ``check_files``: a tqdm bar counting entries (cached ones
    too) whose label names the entries being checked right now."""
    if not wants_progress(args.progress, sys.stderr):
        return None, None
    from tqdm import tqdm

    bar = tqdm(total=total, unit="entry", file=sys.stderr)

    def advance(report) -> None:
        bar.update(1)

    def running(ids: list[str]) -> None:
        # file names come from the pull request: shown escaped, like every diagnostic
        bar.set_postfix_str("checking " + ", ".join(map(printable, ids)) if ids else "")

    return advance, running


def _print_reports(reports, fmt: str, show_computed: bool) -> None:
    from generator.site.export import check_document

    if fmt == "json":
        print(json.dumps(check_document(reports), indent=2, sort_keys=False))
        return
    for report in reports:
        for diagnostic in report.diagnostics:
            text = (diagnostic.format_github() if fmt == "github"
                    else diagnostic.format_text())
            print(text, file=sys.stdout if fmt == "github" else sys.stderr)
        if show_computed:
            print(_computed_yaml(report))
    print(check_summary(reports), file=sys.stderr)


def check_summary(reports) -> str:
    """'3 entries checked: 1 verified, 1 with nothing claimed, 1 failed (2 errors)'."""
    from generator.physics.verify import entry_state

    states = [entry_state(r) for r in reports]
    errors = sum(d.severity == "error" for r in reports for d in r.diagnostics)
    empty = states.count("nothing-claimed")
    nothing = f"{empty} with nothing claimed, " if empty else ""
    return (f"{len(reports)} entries checked: {states.count('verified')} verified, {nothing}"
            f"{states.count('failed')} failed ({errors} errors)")


def _computed_yaml(report) -> str:
    import yaml

    from generator.site.export import matter_as_entry_keys, report_json

    data = report_json(report)
    shown = {"id": data["id"], "file": data["file"], "computed": data["computed"]}
    if report.spacetime is not None and report.classification is not None:
        shown["matter"] = matter_as_entry_keys(report.spacetime, report.classification)
    return "# computed by the tool; compare with the paper before writing claims\n" + \
        yaml.safe_dump(shown, sort_keys=False, allow_unicode=True, width=100)


if __name__ == "__main__":
    raise SystemExit(main())
