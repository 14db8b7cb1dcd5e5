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
