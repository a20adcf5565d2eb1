"""Report pair and figures: together or not at all, never replaced, safe names, cleanup.

References: link(2) (POSIX.1-2017): "If path2 names an existing file, link() shall fail"
[EEXIST], which makes publishing atomic and non-replacing; a killed process is simulated
with os._exit in a child process (no Python cleanup runs, as with SIGKILL).
"""

import json
import os
import subprocess
import sys
import textwrap
import time

import pytest
from matplotlib.figure import Figure

from assess.errors import InputError
from assess.report import ReportDocument, write_report, writer
from assess.report import files as report_files
from assess.report.files import save_figure, write_new_bytes
from assess.report.writer import recover_unfinished_reports
from inspection_io.paths import is_inside


def document():
    return ReportDocument(title="Invented deck")


def names(folder):
    return sorted(p.name for p in folder.iterdir())


def age(path, seconds=3600):
    then = time.time() - seconds
    os.utime(path, (then, then), follow_symlinks=False)


def test_a_failure_between_the_two_files_leaves_neither(tmp_path, monkeypatch):
    real = writer.publish
    calls = []

    def publish_then_fail(tmp, path):
        calls.append(path.suffix)
        if path.suffix == ".html":
            raise OSError(28, "No space left on device")
        real(tmp, path)

    monkeypatch.setattr(writer, "publish", publish_then_fail)
    with pytest.raises(OSError, match="No space"):
        write_report(tmp_path, tmp_path, document(), {"beta": 3.1})
    assert calls == [".json", ".html"]          # the JSON had been published
    assert names(tmp_path) == []                # ... and was taken back, temps and marker too


def test_a_kill_between_the_two_files_is_undone_on_the_next_start(tmp_path):
    # the child publishes the JSON, then dies without any cleanup (like SIGKILL)
    script = textwrap.dedent(f"""
        import os
        from assess.report import ReportDocument, writer
        real = writer.publish
        def publish_then_die(tmp, path):
            if path.suffix == ".html":
                os._exit(9)
            real(tmp, path)
        writer.publish = publish_then_die
        writer.write_report({str(tmp_path)!r}, {str(tmp_path)!r},
                            ReportDocument(title="killed"), {{"beta": 1.0}})
    """)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    assert subprocess.run([sys.executable, "-c", script], env=env, timeout=120,
                          check=False).returncode == 9
    left = names(tmp_path)
    assert any(n.endswith(".json") and n.startswith("report-") for n in left)
    assert not any(n.endswith(".html") and n.startswith("report-") for n in left)
    assert any(n.startswith(".pending-") for n in left) and any(n.endswith(".tmp") for n in left)
    # a run starting within the stale time leaves a possibly live writer alone ...
    assert recover_unfinished_reports([tmp_path]) == []
    # ... while the main job, holding the site lock, recovers at once
    removed = recover_unfinished_reports([tmp_path], older_than=0)
    assert {p.name for p in removed} == set(left)
    assert names(tmp_path) == []
    html_path, json_path = write_report(tmp_path, tmp_path, document(), {"beta": 2.0})
    assert names(tmp_path) == sorted([html_path.name, json_path.name])


def test_stale_leftovers_are_cleaned_when_the_next_report_is_written(tmp_path):
    stale = tmp_path / ".report-2026-01-01T0000-001.html.0123456789abcdef.tmp"
    stale.write_text("<html>half")
    lone = tmp_path / "report-2026-01-01T0000-001.json"
    lone.write_text("{}")
    marker = tmp_path / ".pending-report-2026-01-01T0000-001.cafe"
    marker.write_text(json.dumps([lone.name, "report-2026-01-01T0000-001.html"]))
    young = tmp_path / ".report-2026-01-01T0000-002.json.fedcba9876543210.tmp"
    young.write_text("{")
    for path in (stale, lone, marker):
        age(path)
    html_path, json_path = write_report(tmp_path, tmp_path, document(), {})
    assert names(tmp_path) == sorted([html_path.name, json_path.name, young.name])


def test_a_finished_pair_is_never_removed_by_recovery(tmp_path):
    html_path, json_path = write_report(tmp_path, tmp_path, document(), {})
    marker = tmp_path / f".pending-{html_path.stem}.beef"
    marker.write_text(json.dumps([json_path.name, html_path.name]))   # kill after both
    age(marker)
    recover_unfinished_reports([tmp_path], older_than=0)
    assert names(tmp_path) == sorted([html_path.name, json_path.name])
    # a marker naming files of another shape is not trusted
    other = tmp_path / "notes.json"
    other.write_text("{}")
    bad = tmp_path / ".pending-something.beef"
    bad.write_text(json.dumps(["notes.json", "missing.html"]))
    recover_unfinished_reports([tmp_path], older_than=0)
    assert other.exists() and not bad.exists()


def test_published_files_are_never_replaced(tmp_path, monkeypatch):
    target = tmp_path / "a.json"
    target.write_text("first")
    tmp = report_files.write_temporary(target, b"second")
    with pytest.raises(FileExistsError):
        report_files.publish(tmp, target)
    tmp.unlink()
    assert target.read_text() == "first"
    # a report name taken by another run at the last moment: InputError, nothing left behind
    taken = tmp_path / "r.json"
    monkeypatch.setattr(writer, "report_paths", lambda *a, **k: (tmp_path / "r.html", None))
    monkeypatch.setattr(writer, "recover_unfinished_reports", lambda *a, **k: [])
    real = writer.publish

    def other_run_first(tmp, path):
        if path == taken:
            taken.write_text("other run")
        real(tmp, path)

    monkeypatch.setattr(writer, "publish", other_run_first)
    with pytest.raises(InputError, match="appeared while writing"):
        write_report(tmp_path, tmp_path, document(), {})
    assert taken.read_text() == "other run" and not (tmp_path / "r.html").exists()
    assert names(tmp_path) == ["a.json", "r.json"]


@pytest.mark.parametrize("member", ["../../../escape", "/abs", "S1/../..", "..", "\x00x"])
def test_figure_names_from_ids_stay_in_their_folder(tmp_path, member):
    folder = tmp_path / "site" / "results" / "plots"
    path = save_figure(Figure(figsize=(1, 1)), folder, f"worth-{member}")
    assert path.parent == folder and is_inside(folder, path)
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"          # PNG signature (ISO/IEC 15948)
    assert sorted(p.name for p in (tmp_path / "site").rglob("*") if p.is_file()) == [path.name]


def test_write_new_bytes_never_replaces_and_leaves_no_temporaries(tmp_path):
    first = write_new_bytes(tmp_path, "beta-history", ".png", b"one")
    second = write_new_bytes(tmp_path, "beta-history", ".png", b"two")
    assert first != second and first.read_bytes() == b"one" and second.read_bytes() == b"two"
    assert names(tmp_path) == sorted([first.name, second.name])
