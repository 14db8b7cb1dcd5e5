"""The whole build, top-down: load → compute → classify & verify → render.

Reading this file should be enough to know what `python -m generator build` does.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
from collections.abc import Callable
from dataclasses import dataclass
from importlib import metadata
from pathlib import Path

from generator import __version__
from generator.entry.catalog import entry_files, read_families, read_tags
from generator.entry.publication import HOW_TO_SET, catalog_version, read_publication
from generator.errors import UsageError
from generator.model import CatalogMeta, EntryReport
from generator.run.pipeline import RunOptions, check_files, runs_in_this_process


@dataclass(frozen=True)
class BuildResult:
    ok: bool
    reports: tuple[EntryReport, ...]
    refused: tuple[str, ...]  # files of entries that failed their checks


def build_site(catalog: Path, out: Path, options: RunOptions,
               publish_verified_only: bool = False,
               on_done: Callable[[EntryReport], None] | None = None,
               on_running: Callable[[list[str]], None] | None = None,
               prune_cache: bool = False, require_address: bool = False) -> BuildResult:
    """Check every entry, then render the site into ``out`` atomically.

    Any failed entry fails the build and leaves the previous site untouched, unless
    ``publish_verified_only`` is set: then the site is written with the verified entries only.
    ``on_done`` and ``on_running`` follow the checks (see ``pipeline.check_files``).
    ``prune_cache``: once the site is written, delete the cached reports, cards and views this
    build did not use (for a cache kept between CI runs; see ``cache.prune``).
    ``require_address``: refuse to build a catalog whose citations would carry no address.
    """
    if not (catalog / "tags.yaml").is_file():
        raise UsageError(f"{catalog} is not a catalog folder (no tags.yaml)")
    if require_address and read_publication(catalog).site_address is None:
        raise UsageError(f"{catalog} names no site address; {HOW_TO_SET}")
    base = Path.cwd()
    check_output_folder(out, catalog, base)
    reports = check_files(entry_files([catalog]), catalog.resolve(), base, options,
                          on_done, on_running)
    refused = tuple(r.file for r in reports if not r.ok)
    report_problems(reports)
    if refused and not publish_verified_only:
        print(f"build failed: {len(refused)} entries did not verify; site/ left unchanged",
              file=sys.stderr)
        return BuildResult(False, tuple(reports), refused)
    meta = catalog_meta(catalog, options.cache_dir)
    views = render_atomically(reports, meta, out, options.cache_dir,
                              jobs=1 if runs_in_this_process(options) else options.jobs)
    if prune_cache and options.cache_dir is not None:
        prune_unused(options.cache_dir, reports, views)
    print(f"site written to {out}/ ({len(reports) - len(refused)} entries)", file=sys.stderr)
    return BuildResult(not refused, tuple(reports), refused)


SITE_MARKER = ".metric-almanac-site"
_MARKER_TEXT = ("This folder was written by the Metric Almanac build. The next build replaces it "
                "whole:\nkeep nothing else here.\n")


def check_output_folder(out: Path, catalog: Path, base: Path) -> None:
    """Refuse an output folder the build's swap would destroy data with.

    The build replaces ``out`` whole (render aside, swap in, delete the old one), so ``out``
    must be a folder this tool wrote (it holds SITE_MARKER), an empty one, or a new one — never
    the catalog, the project or the working folder, a folder inside the catalog, or a folder
    containing any of them (``--out .`` would take ``.git`` with it).
    """
    target = out.resolve()
    catalog = catalog.resolve()
    protected = {"the catalog": catalog, "the project": catalog.parent,
                 "the working folder": base.resolve()}
    for name, folder in protected.items():
        if target == folder or target in folder.parents:
            raise UsageError(f"--out {out}: this folder is or contains {name} ({folder}); the "
                             "build replaces its output folder whole. Choose a new folder, "
                             "e.g. --out site")
    if catalog in target.parents:
        raise UsageError(f"--out {out}: this folder is inside the catalog; choose a folder "
                         "outside it, e.g. --out site")
    if target.is_symlink() or (target.exists() and not target.is_dir()):
        raise UsageError(f"--out {out}: exists and is not a folder; choose a new folder")
    if target.is_dir() and any(target.iterdir()) and not (target / SITE_MARKER).is_file():
        raise UsageError(f"--out {out}: the folder is not empty and was not written by this "
                         f"tool (no {SITE_MARKER} file), so the build will not replace it. "
                         "Choose a new folder, or empty this one yourself")


def prune_unused(cache_dir: Path, reports: list[EntryReport], views: set[str]) -> None:
    from generator.run.cache import REPORT_SUFFIX, prune
    from generator.run.pipeline import TWIN_CARD_SUFFIX
    from generator.site.writer import VIEW_SUFFIX

    used = {r.inputs_key for r in reports if r.inputs_key}
    removed = prune(cache_dir, {REPORT_SUFFIX: used, TWIN_CARD_SUFFIX: used, VIEW_SUFFIX: views})
    print(f"cache pruned: {removed} unused files removed from {cache_dir}", file=sys.stderr)


def report_problems(reports: list[EntryReport]) -> None:
    for report in reports:
        for diagnostic in report.diagnostics:
            print(diagnostic.format_text(), file=sys.stderr)
    failed = sum(not r.ok for r in reports)
    print(f"{len(reports)} entries checked: {len(reports) - failed} verified, {failed} failed",
          file=sys.stderr)


def catalog_meta(catalog: Path, cache_dir: Path | None = None) -> CatalogMeta:
    """Catalog-wide data: versions, vocabularies, the contributor guide, git revisions."""
    project = catalog.resolve().parent
    publication = read_publication(catalog)
    guide = project / "DEVELOPERS.md"
    return CatalogMeta(
        version=catalog_version(catalog, publication, __version__),
        generator_version=__version__,
        sympy_version=metadata.version("sympy"),
        families=read_families(catalog),
        tags=read_tags(catalog),
        contributing_markdown=guide.read_text(encoding="utf-8") if guide.is_file() else "",
        publication=publication,
        revisions=_revisions(project, catalog, cache_dir),
    )


def _revisions(project: Path, catalog: Path, cache_dir: Path | None) -> dict:
    from generator.entry.history import GitError, catalog_revisions, repo_root

    if repo_root(project) is None:
        return {}
    from generator.run.cache import cache_secret

    cache_file = cache_dir / "content-hashes.json" if cache_dir is not None else None
    secret = cache_secret() if cache_dir is not None else None
    try:
        return catalog_revisions(project, catalog, cache_file=cache_file, secret=secret)
    except (GitError, UsageError):
        return {}


def render_atomically(reports: list[EntryReport], meta: CatalogMeta, out: Path,
                      cache_dir: Path | None = None, jobs: int = 1) -> set[str]:
    """Render into a fresh sibling folder, then swap it in, so readers never see half a site.
    With a cache folder, entry views are kept there between builds
    (``site.writer.kept_views_of``); views not kept are made by up to ``jobs`` worker
    processes (0: all cores; see ``run.views``). Returns the keys of the views used."""
    from generator.run.cache import ResultCache
    from generator.run.views import views_in_processes
    from generator.site.writer import VIEW_SUFFIX, render_site

    kept = ResultCache(cache_dir, suffix=VIEW_SUFFIX) if cache_dir is not None else None

    out = out.resolve()
    out.parent.mkdir(parents=True, exist_ok=True)
    old = out.parent / f".{out.name}.previous"
    recover_interrupted_swap(out, old)
    staging = Path(tempfile.mkdtemp(prefix=f".{out.name}.building-", dir=out.parent))
    try:
        views = render_site(reports, meta, staging, kept, views_in_processes(jobs, kept))
        (staging / SITE_MARKER).write_text(_MARKER_TEXT, encoding="utf-8")
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    shutil.rmtree(old, ignore_errors=True)
    if out.exists():
        os.replace(out, old)
    os.replace(staging, out)
    os.chmod(out, 0o755)
    shutil.rmtree(old, ignore_errors=True)
    return views


def recover_interrupted_swap(out: Path, old: Path) -> None:
    """A build killed between the two renames leaves only the previous site: put it back."""
    if old.is_dir() and not out.exists():
        os.replace(old, out)
    for leftover in out.parent.glob(f".{out.name}.building-*"):
        shutil.rmtree(leftover, ignore_errors=True)


def serve_site(catalog: Path, out: Path, port: int, host: str = "127.0.0.1") -> None:
    """Build once, then preview on ``host`` and rebuild when the catalog or templates change.
    An entry that failed its check is not published; its page in the preview lists its
    diagnostics."""
    from generator.run.serve import serve

    options = RunOptions(cache_dir=Path(".almanac-cache"))
    failed: dict[str, list[str]] = {}

    def rebuild() -> None:
        result = build_site(catalog, out, options, publish_verified_only=True)
        failed.clear()
        failed.update(failures_by_id(result.reports))

    print(f"serve: checking {catalog}/ and building the site; the preview opens at "
          f"http://{host}:{port}/ when the first build ends", file=sys.stderr, flush=True)
    rebuild()
    from generator.site.common import TEMPLATE_DIR

    serve(out, rebuild, host=host, port=port, watch_paths=[catalog, TEMPLATE_DIR],
          diagnose=failed.get)


def failures_by_id(reports: tuple[EntryReport, ...]) -> dict[str, list[str]]:
    """Entry id (or file stem) -> its diagnostics as text, for each entry that failed."""
    return {(r.entry.id if r.entry else Path(r.file).stem):
            [d.format_text() for d in r.diagnostics] for r in reports if not r.ok}
