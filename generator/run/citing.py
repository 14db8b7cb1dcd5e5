"""The ``cite`` command: a citation of an entry that passed its checks, or of its original
publication, or the entry and commit a content hash belongs to.

Citing runs the entry's check first (through the result cache, so a second citation is
instant): a paper must not cite an entry the catalog would refuse to publish. A user who
really needs to cite a failing entry says so with ``--allow-unverified``, and the citation
then says that the entry did not pass.
"""

from __future__ import annotations

import argparse
import sys
from dataclasses import replace
from pathlib import Path
from typing import TextIO

from generator import __version__
from generator.entry.history import lookup_main, revisions
from generator.entry.publication import HOW_TO_SET, catalog_version, read_publication
from generator.errors import UsageError
from generator.model import CatalogMeta, EntryReport
from generator.run.pipeline import RunOptions, check_files
from generator.site.cite import FORMATS, cite_entry, cite_original

EXIT_OK, EXIT_FAILED, EXIT_USAGE = 0, 1, 2
DEFAULT_CACHE = Path(".almanac-cache")


def cite_main(argv: list[str], out: TextIO | None = None, err: TextIO | None = None) -> int:
    """``cite ID [--format F] [--original] [--allow-unverified]`` or ``cite --hash H``.

    Exit status: 0 printed, 1 the entry fails its checks (and --allow-unverified was not
    given), 2 bad usage or no such entry or hash.
    """
    out, err = out or sys.stdout, err or sys.stderr
    args = _parser().parse_args(argv)
    catalog = Path(args.catalog)
    if args.hash:
        return lookup_main(Path(args.repo), catalog, args.hash, out, err)
    if not args.id:
        print("error: give an entry id, or --hash H", file=err)
        return EXIT_USAGE
    path = find_entry_file(catalog, args.id)
    if path is None:
        print(f"error: no entry with id {args.id!r} under {catalog}/", file=err)
        return EXIT_USAGE
    report = checked_report(path, catalog, args)
    if report.entry is None:
        _print_diagnostics(report, err)
        return EXIT_USAGE
    if not report.ok and not args.allow_unverified:
        _print_diagnostics(report, err)
        print(f"error: {args.id} fails its checks, so it is not cited; fix the entry, or give "
              "--allow-unverified to cite it anyway (the citation then says it failed)",
              file=err)
        return EXIT_FAILED
    if args.original:
        out.write(cite_original(report.entry, args.format))
        return EXIT_OK
    meta = citation_meta(catalog, path, Path(args.repo), args.site_address)
    if meta.publication.site_address is None:
        print(f"note: this citation has no web address; {HOW_TO_SET}", file=err)
    out.write(cite_entry(report, meta, args.format))
    return EXIT_OK


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="almanac cite",
        description="Print a citation of a catalog entry that passes its checks, or find which "
                    "entry and commit a content hash belongs to.",
    )
    parser.add_argument("id", nargs="?", help="entry id, e.g. kerr-boyer-lindquist")
    parser.add_argument("--format", choices=FORMATS, default="bibtex")
    parser.add_argument(
        "--original", action="store_true",
        help="cite the publications the metric comes from (every reference with role original)"
    )
    parser.add_argument("--hash", metavar="H", help="find the entry and commit of a content hash")
    parser.add_argument("--catalog", default="catalog", help="catalog folder (default: catalog)")
    parser.add_argument("--repo", default=".", help="git repository holding the catalog")
    parser.add_argument("--site-address", help="public address of the built site (default: "
                        "site_address in the catalog's publication.yaml)")
    parser.add_argument("--allow-unverified", action="store_true",
                        help="cite an entry that fails its checks (the citation says so)")
    parser.add_argument("--cache-dir", type=Path, default=DEFAULT_CACHE,
                        help="folder of cached check results (default .almanac-cache)")
    parser.add_argument("--no-cache", action="store_true", help="check without the cache")
    return parser


def find_entry_file(catalog: Path, entry_id: str) -> Path | None:
    """The file ``catalog/<family>/<id>.yaml`` if exactly one exists (never through a link)."""
    matches = [p for p in sorted(catalog.glob(f"*/{entry_id}.yaml")) if not p.is_symlink()]
    return matches[0] if len(matches) == 1 else None


def checked_report(path: Path, catalog: Path, args: argparse.Namespace) -> EntryReport:
    """The entry's full check, as ``check`` runs it (one worker, the usual budget)."""
    options = RunOptions(jobs=1, cache_dir=None if args.no_cache else args.cache_dir)
    (report,) = check_files([path], catalog, Path.cwd(), options)
    return report


def citation_meta(catalog: Path, entry_path: Path, repo: Path,
                  site_address: str | None = None) -> CatalogMeta:
    """The part of the site's ``CatalogMeta`` a citation uses, read as the build reads it
    (publication settings, version, git revisions), so the command prints exactly the
    citation shown on the entry's page."""
    publication = read_publication(catalog)
    if site_address is not None:
        from generator.entry.publication import ADDRESS

        if not ADDRESS.match(site_address):
            raise UsageError(f"--site-address {site_address!r} is not a plain http(s) address")
        publication = replace(publication, site_address=site_address)
    return CatalogMeta(
        version=catalog_version(catalog, publication, __version__),
        generator_version=__version__,
        sympy_version="",
        families=(),
        tags=(),
        contributing_markdown="",
        publication=publication,
        revisions={entry_path.stem: revisions(repo, entry_path)},
    )


def _print_diagnostics(report: EntryReport, err: TextIO) -> None:
    for diagnostic in report.diagnostics:
        print(diagnostic.format_text(), file=err)
