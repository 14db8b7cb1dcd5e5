"""Preview server: serves the built folder on 127.0.0.1 and rebuilds when a source changes."""

from __future__ import annotations

import threading
import urllib.request
from pathlib import Path

from generator.run import serve


def test_snapshot_sees_edits_and_new_files(tmp_path: Path) -> None:
    (tmp_path / "a.yaml").write_text("x: 1\n")
    before = serve.snapshot([tmp_path])
    (tmp_path / "a.yaml").write_text("x: 22\n")
    assert serve.snapshot([tmp_path]) != before
    after_edit = serve.snapshot([tmp_path])
    (tmp_path / "b.yaml").write_text("y: 1\n")
    assert serve.snapshot([tmp_path]) != after_edit
    assert serve.snapshot([tmp_path / "missing"]) == ()


def test_watch_rebuilds_after_a_change_and_stops_when_asked(tmp_path: Path) -> None:
    source = tmp_path / "entry.yaml"
    source.write_text("title: one\n")
    rebuilt = threading.Event()
    stop = threading.Event()
    initial = serve.snapshot([tmp_path])
    watcher = threading.Thread(target=serve.watch,
                               args=(rebuilt.set, stop, (tmp_path,), 0.05, initial))
    watcher.start()
    try:
        source.write_text("title: two, longer\n")
        assert rebuilt.wait(timeout=30)
    finally:
        stop.set()
        watcher.join(timeout=30)
    assert not watcher.is_alive()


def test_failed_rebuild_is_reported_not_raised(capsys: object) -> None:
    from generator.errors import AlmanacError

    def broken() -> None:
        raise AlmanacError("catalog/x.yaml:1:1: error: boom")

    assert serve.rebuild_safely(broken) is False
    assert "still serving the previous site" in capsys.readouterr().err  # type: ignore[attr-defined]


def test_server_serves_the_site_folder_on_loopback(tmp_path: Path) -> None:
    (tmp_path / "index.html").write_text("<p>hello</p>", encoding="utf-8")
    server = serve.make_server(tmp_path, "127.0.0.1", 0)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        url = f"http://127.0.0.1:{server.server_port}/index.html"
        with urllib.request.urlopen(url, timeout=30) as response:
            assert response.read() == b"<p>hello</p>"
            assert response.headers["Cache-Control"] == "no-store"
    finally:
        server.shutdown()
        server.server_close()


# A red-team pass found the preview silently stuck: a non-string tag key raised TypeError in
# read_tags, the watcher thread died, and the old site went on being served without a word.


def test_any_exception_in_a_rebuild_is_reported_and_the_watcher_goes_on(
        tmp_path: Path, capsys: object) -> None:
    source = tmp_path / "tags.yaml"
    source.write_text("vacuum: one\n")
    outcomes: list[str] = []
    second = threading.Event()

    def rebuild() -> None:
        outcomes.append("called")
        if len(outcomes) == 1:
            raise TypeError("'<' not supported between instances of 'int' and 'str'")
        second.set()

    stop = threading.Event()
    watcher = threading.Thread(target=serve.watch, args=(rebuild, stop, (tmp_path,), 0.05,
                                                         serve.snapshot([tmp_path])))
    watcher.start()
    try:
        source.write_text("vacuum: two\n1: a number\n")
        while len(outcomes) < 1 and watcher.is_alive():
            stop.wait(0.05)
        source.write_text("vacuum: three, longer\n")
        assert second.wait(timeout=60), "the watcher stopped after the first failure"
    finally:
        stop.set()
        watcher.join(timeout=30)
    err = capsys.readouterr().err  # type: ignore[attr-defined]
    assert "internal error" in err and "TypeError" in err


def test_a_rebuild_error_message_cannot_forge_output_lines(capsys: object) -> None:
    def broken() -> None:
        raise ValueError("x\n::error file=README.md::forged")

    assert serve.rebuild_safely(broken) is False
    err = capsys.readouterr().err  # type: ignore[attr-defined]
    assert not any(line.startswith("::") for line in err.splitlines())


def test_snapshot_sees_a_link_without_following_it(tmp_path: Path) -> None:
    import os

    os.symlink("/nonexistent/target", tmp_path / "dangling.yaml")
    os.symlink(tmp_path, tmp_path / "loop")
    paths = [entry[0] for entry in serve.snapshot([tmp_path])]
    assert str(tmp_path / "dangling.yaml") in paths and str(tmp_path / "loop") in paths


def test_the_rebuild_runs_on_the_main_thread_where_limits_apply(
        tmp_path: Path, monkeypatch) -> None:
    """`run_limited` can only set its alarm on the main thread; `serve` now runs the watch
    loop (and so every rebuild) there, and the server in a thread of its own."""
    threads: list[bool] = []

    def fake_watch(rebuild, stop, roots, interval, initial) -> None:
        threads.append(threading.current_thread() is threading.main_thread())
        raise KeyboardInterrupt

    monkeypatch.setattr(serve, "watch", fake_watch)
    (tmp_path / "index.html").write_text("x")
    serve.serve(tmp_path, lambda: None, port=0, watch_paths=[tmp_path])
    assert threads == [True]
