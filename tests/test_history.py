"""Revision history and changed-entry selection (generator/entry/history.py), on real git
repositories.

git itself (the reference implementation of its own history) decides what changed; the tests
build small repositories with known commits and check that we read them back correctly.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
from _git_sandbox import Sandbox, demo_entry

from generator.entry.content_hash import content_hash
from generator.entry.history import (
    _parse_batch,
    catalog_revisions,
    changed_entries,
    describe_match,
    loader_hasher,
    lookup_hash,
    lookup_main,
    revisions,
)
from generator.entry.loader import load_entry
from generator.errors import UsageError
from generator.run.citing import cite_main

OLD = "catalog/demo-family/lantern.yaml"
NEW = "catalog/other-family/lantern.yaml"


def hash_of(path: Path) -> str:
    result = load_entry(path)
    assert result.entry is not None, [d.format_text() for d in result.diagnostics]
    return content_hash(result.entry)


@pytest.fixture
def history(tmp_path: Path) -> tuple[Sandbox, dict[str, str], dict[str, str]]:
    """Seven commits of one entry; returns the sandbox, commit ids and hashes by step name."""
    box = Sandbox(tmp_path / "repo")
    commits, hashes = {}, {}

    def step(name: str, path: str, text: str, message: str) -> None:
        file = box.write(path, text)
        commits[name] = box.commit(message)
        if text.startswith("#"):
            hashes[name] = hash_of(file)

    step("add", OLD, demo_entry("lantern"), "Add the lantern entry")
    step("reword", OLD, demo_entry("lantern", notes="Better notes."), "Reword notes")
    relaid = demo_entry("lantern", notes="Better notes.").replace(
        "coordinates: [t, x]", "# index order\ncoordinates:\n  - 't'\n  - \"x\""
    )
    step("relayout", OLD, relaid, "Reformat the YAML")
    step("fix", OLD, demo_entry("lantern", metric="-(1 + k*x**4)*dt**2 + dx**2"), "Fix exponent")
    (box.root / OLD).unlink()
    step("move", NEW, demo_entry("lantern", metric="-(1 + k*x**4)*dt**2 + dx**2"), "Move family")
    step("break", NEW, "id: [unclosed\n", "Broken commit")
    step("repair", NEW, demo_entry("lantern", metric="-(1 + k*x**4)*dt**2 + 2*dx**2"), "Rescale x")
    return box, commits, hashes


def test_revisions_are_the_commits_that_changed_the_mathematics(history) -> None:
    box, commits, hashes = history
    found = revisions(box.root, box.root / NEW)
    assert [(r.commit, r.summary) for r in found] == [
        (commits["add"], "Add the lantern entry"),
        (commits["fix"], "Fix exponent"),
        (commits["repair"], "Rescale x"),
    ]
    assert [r.content_hash for r in found] == [hashes["add"], hashes["fix"], hashes["repair"]]
    assert [r.date for r in found] == ["2026-11-02", "2026-11-05", "2026-11-08"]


def test_rewording_and_relayout_keep_the_hash(history) -> None:
    _, _, hashes = history
    assert hashes["add"] == hashes["reword"] == hashes["relayout"]
    assert hashes["fix"] == hashes["move"] != hashes["add"]


def test_revisions_accept_a_path_relative_to_the_working_directory(history, monkeypatch) -> None:
    box, _, _ = history
    monkeypatch.chdir(box.root)
    assert len(revisions(Path("."), Path(NEW))) == 3


def test_catalog_revisions_are_keyed_by_entry_id(history) -> None:
    box, _, _ = history
    by_id = catalog_revisions(box.root, box.root / "catalog")
    assert list(by_id) == ["lantern"] and len(by_id["lantern"]) == 3


def test_catalog_revisions_read_in_one_batch_equal_those_read_one_by_one(history) -> None:
    # The whole-catalog path reads blobs with one `git cat-file --batch`; the one-entry path
    # asks git per blob. Same commits, hashes, dates, summaries and sources.
    box, _, _ = history
    assert catalog_revisions(box.root, box.root / "catalog")["lantern"] == revisions(
        box.root, box.root / NEW)


def test_batch_output_is_parsed_by_sizes_and_missing_objects_are_skipped() -> None:
    # git cat-file --batch prints "<id> blob <size>\n<bytes>\n", "<id> missing\n" (git docs).
    a, b, c = "a" * 40, "b" * 40, "c" * 40
    body = b"id: x\r\nnotes: |\n  two\n  lines\n"
    out = (f"{a} blob {len(body)}\n".encode() + body + b"\n" + f"{b} missing\n".encode()
           + f"{c} blob 3\n".encode() + b"\xff\xfe\x00\n")
    found = _parse_batch(out)
    assert found == {a: "id: x\nnotes: |\n  two\n  lines\n"}  # CRLF read as text; c not UTF-8


def test_no_history_outside_git(tmp_path: Path) -> None:
    path = tmp_path / "catalog" / "demo" / "lantern.yaml"
    path.parent.mkdir(parents=True)
    path.write_text(demo_entry("lantern"))
    assert revisions(tmp_path, path) == ()


# ---------------------------------------------------------------------------- hash look-up


def test_lookup_finds_entry_commit_and_content(history) -> None:
    box, commits, hashes = history
    (match,) = lookup_hash(box.root, box.root / "catalog", hashes["add"][:12])
    assert match.entry_id == "lantern"
    assert match.revision.commit == commits["add"]  # where it first appeared, not "reword"
    assert match.path == OLD  # the file has moved since; the citation still resolves
    assert "x**2" in match.source and match.source.startswith("# yaml-language-server")


def test_lookup_accepts_uppercase_and_rejects_short_or_non_hex(history) -> None:
    box, _, hashes = history
    assert len(lookup_hash(box.root, box.root / "catalog", hashes["fix"][:8].upper())) == 1
    for bad in ("abc", "xyz123456"):
        with pytest.raises(UsageError):
            lookup_hash(box.root, box.root / "catalog", bad)


def test_lookup_main_prints_the_match_and_fails_cleanly_on_unknown(history) -> None:
    box, commits, hashes = history
    out, err = io.StringIO(), io.StringIO()
    assert lookup_main(box.root, box.root / "catalog", hashes["repair"][:12], out, err) == 0
    text = out.getvalue()
    assert text.startswith(f"entry lantern ({NEW})\ncontent hash {hashes['repair'][:12]} ")
    assert f"first seen in commit {commits['repair']} on 2026-11-08: Rescale x\n" in text
    assert "2*dx**2" in text
    out, err = io.StringIO(), io.StringIO()
    assert lookup_main(box.root, box.root / "catalog", "0123456789ab", out, err) == 2
    assert out.getvalue() == "" and "no revision" in err.getvalue()


def test_describe_match_ends_with_a_newline(history) -> None:
    box, _, hashes = history
    (match,) = lookup_hash(box.root, box.root / "catalog", hashes["fix"])
    assert describe_match(match).endswith("\n")


def test_cite_hash_command(history, capsys) -> None:
    box, commits, hashes = history
    argv = [
        "--hash",
        hashes["fix"][:12],
        "--repo",
        str(box.root),
        "--catalog",
        str(box.root / "catalog"),
    ]
    assert cite_main(argv) == 0
    assert f"first seen in commit {commits['fix']}" in capsys.readouterr().out


# ---------------------------------------------------------------------------- changed entries


@pytest.fixture
def branch(tmp_path: Path) -> Sandbox:
    """main: a, b, d, f, tags.yaml; feature branch: modify a, add c, delete b, touch notes;
    after the branch point main modifies f; uncommitted: modify d, new untracked e."""
    box = Sandbox(tmp_path / "repo")
    for name in ("a", "b", "d", "f"):
        box.write(f"catalog/fam/{name}.yaml", demo_entry(name))
    box.write("catalog/tags.yaml", "demo: A demo tag.\n")
    box.commit("Base")
    box.git("checkout", "-q", "-b", "feature")
    box.write("catalog/fam/a.yaml", demo_entry("a", notes="Changed."))
    box.write("catalog/fam2/c.yaml", demo_entry("c"))
    (box.root / "catalog/fam/b.yaml").unlink()
    box.write("catalog/tags.yaml", "demo: A demo tag.\nmore: Another.\n")
    box.write("catalog/fam/README.md", "not an entry\n")
    box.write("docs/x.yaml", "outside the catalog\n")
    box.commit("Feature work")
    box.git("checkout", "-q", "main")
    box.write("catalog/fam/f.yaml", demo_entry("f", notes="Changed on main."))
    box.commit("Main moves on")
    box.git("checkout", "-q", "feature")
    box.write("catalog/fam/d.yaml", demo_entry("d", notes="Uncommitted."))
    box.write("catalog/fam3/e.yaml", demo_entry("e"))
    return box


def test_changed_entries_since_the_branch_point(branch: Sandbox) -> None:
    catalog = branch.root / "catalog"
    assert changed_entries(branch.root, "main", catalog) == [
        catalog / "fam" / "a.yaml",
        catalog / "fam" / "d.yaml",
        catalog / "fam2" / "c.yaml",
        catalog / "fam3" / "e.yaml",
    ]


def test_changed_entries_keep_the_callers_relative_catalog(branch: Sandbox, monkeypatch) -> None:
    monkeypatch.chdir(branch.root)
    found = changed_entries(Path("."), "main", Path("catalog"))
    assert found[0] == Path("catalog/fam/a.yaml")


def test_staged_changes_count_too(branch: Sandbox) -> None:
    branch.git("add", "catalog/fam/d.yaml")
    assert branch.root / "catalog/fam/d.yaml" in changed_entries(
        branch.root, "main", branch.root / "catalog"
    )


def test_nothing_changed_gives_an_empty_list(branch: Sandbox) -> None:
    branch.git("add", "-A")
    branch.git("commit", "-q", "-m", "Everything")
    assert changed_entries(branch.root, "HEAD", branch.root / "catalog") == []


def test_unknown_ref_and_no_git_are_usage_errors(branch: Sandbox, tmp_path: Path) -> None:
    with pytest.raises(UsageError, match="cannot compare with 'origin/nowhere'"):
        changed_entries(branch.root, "origin/nowhere", branch.root / "catalog")
    outside = tmp_path / "plain"
    (outside / "catalog").mkdir(parents=True)
    with pytest.raises(UsageError, match="not inside a git repository"):
        changed_entries(outside, "main", outside / "catalog")


def test_cite_command_uses_the_current_hash_and_the_latest_revision_year(history, capsys) -> None:
    box, _, hashes = history
    box.write("pyproject.toml", '[project]\nversion = "2.5.0"\n')
    box.write("catalog/publication.yaml", "site_address: https://almanac.test/\n")
    argv = [
        "lantern",
        "--no-cache",
        "--format",
        "text",
        "--repo",
        str(box.root),
        "--catalog",
        str(box.root / "catalog"),
    ]
    assert cite_main(argv) == 0
    assert capsys.readouterr().out == (
        "Metric Almanac contributors (2026). Lantern toy spacetime (Harbour coordinates). "
        f"Metric Almanac, version 2.5.0, entry lantern, content hash {hashes['repair'][:12]}. "
        "https://almanac.test/entries/lantern/ (accessed <date>).\n"
    )


def test_cite_command_refuses_unknown_ids(history, capsys) -> None:
    box, _, _ = history
    assert cite_main(["nowhere", "--catalog", str(box.root / "catalog")]) == 2
    assert "no entry with id 'nowhere'" in capsys.readouterr().err


def test_blob_hashes_are_kept_between_runs(history, tmp_path: Path) -> None:
    box, _, _ = history
    cache = tmp_path / "cache" / "content-hashes.json"
    first = catalog_revisions(box.root, box.root / "catalog", cache_file=cache, secret=KEY)
    assert cache.is_file()

    def must_not_run(file: str, source: str) -> str | None:
        raise AssertionError(f"{file} hashed again")

    again = catalog_revisions(box.root, box.root / "catalog", hasher=must_not_run,
                              cache_file=cache, secret=KEY)
    assert again == first


KEY = b"history-test-key-of-at-least-32-bytes"


def _planted(cache: Path, change) -> None:
    """Rewrite the kept table's rows with ``change`` (keeping the old signature)."""
    data = json.loads(cache.read_text())
    data["table"] = {key: change(value) for key, value in data["table"].items()}
    cache.write_text(json.dumps(data))


@pytest.mark.parametrize("planted", [
    "0" * 64,  # a well-formed hash that is not the entry's: a forged revision
    "../../../../../X",  # shaped like a path
    12345,  # not even a string
])
def test_a_planted_hash_table_is_never_trusted(history, tmp_path: Path, planted) -> None:
    """Found by a red-team pass: the unsigned table's values were published as revision hashes
    and built into file names. Now the table is signed; an edited one is recomputed whole."""
    box, _, _ = history
    cache = tmp_path / "content-hashes.json"
    honest = catalog_revisions(box.root, box.root / "catalog", cache_file=cache, secret=KEY)
    _planted(cache, lambda value: planted)
    again = catalog_revisions(box.root, box.root / "catalog", cache_file=cache, secret=KEY)
    assert again == honest


def test_a_table_signed_with_another_key_is_recomputed(history, tmp_path: Path) -> None:
    box, _, _ = history
    cache = tmp_path / "content-hashes.json"
    catalog_revisions(box.root, box.root / "catalog", cache_file=cache, secret=b"k" * 40)
    calls: list[str] = []

    def counting(file: str, source: str) -> str | None:
        calls.append(file)
        return loader_hasher(file, source)

    catalog_revisions(box.root, box.root / "catalog", hasher=counting, cache_file=cache,
                      secret=KEY)
    assert calls, "a table signed with another key was trusted"


def test_a_signed_row_shaped_like_a_path_is_still_refused(tmp_path: Path) -> None:
    """Even under a valid signature, a row must look like what hash_of writes."""
    from generator.entry.history import BlobHashes

    cache = tmp_path / "content-hashes.json"
    writer = BlobHashes(file=cache, secret=KEY)
    writer.known = {"scheme:1.0:" + "a" * 40: "../../x"}
    writer.changed = True
    writer.save()
    assert BlobHashes(file=cache, secret=KEY).known == {}
    writer.known = {"scheme:1.0:" + "a" * 40: "b" * 64}
    writer.save()
    assert BlobHashes(file=cache, secret=KEY).known == writer.known


@pytest.mark.parametrize("bad", ["../x", "a" * 11, "G" * 64, "x/../../y", "a" * 63 + "\n"])
def test_revision_file_names_are_built_only_from_hex_hashes(bad: str) -> None:
    from generator.site.common import revision_file

    assert revision_file("lantern", "a" * 64).endswith("/" + "a" * 12 + ".yaml")
    with pytest.raises(ValueError):
        revision_file("lantern", bad)


@pytest.mark.parametrize("bad", ["../x", "A", "x/y", "", "a--b", "lantern\n"])
def test_revision_file_names_are_built_only_from_entry_ids(bad: str) -> None:
    from generator.site.common import revision_file

    with pytest.raises(ValueError):
        revision_file(bad, "a" * 64)


def test_a_damaged_hash_cache_is_ignored(history, tmp_path: Path) -> None:
    box, _, _ = history
    cache = tmp_path / "content-hashes.json"
    cache.write_text("{not json")
    assert len(catalog_revisions(box.root, box.root / "catalog", cache_file=cache)["lantern"]) == 3
