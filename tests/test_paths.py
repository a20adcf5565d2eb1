"""Safe file stems from ids and paths that must stay inside the site folder."""

import hashlib
import os
import re
import time

import pytest

from inspection_io.errors import InputError
from inspection_io.paths import (
    HASH_DIGITS,
    MAX_STEM_LENGTH,
    inside_site,
    is_inside,
    remove_stale_temporaries,
    replace_atomically,
    safe_file_stem,
    site_subfolder,
)

# POSIX.1-2017, 3.282 "Portable Filename Character Set": A-Z a-z 0-9 . _ -
PORTABLE = re.compile(r"^[A-Za-z0-9_][A-Za-z0-9._-]*$")

MALICIOUS = ["../../../etc/passwd", "/", "..", ".", "", "a/b", "a\\b", "..\\..\\x",
             "/abs/path", ".hidden", "-rf", "line\nbreak", "nul\x00byte", "tab\there",
             "\u202eevil", "L1/../../..", "CON", "nul.txt", "x" * 500, "trailing.",
             "Ebene \u00dc1", "S1-03-0123456789"]


def test_safe_ids_are_kept_as_they_are():
    # ids of the demo site and the data-formats examples
    for text in ("S1-03", "L1", "B1-02", "C3-C4", "zone_2", "P09-L1-1", "v1.2"):
        assert safe_file_stem(text) == text


@pytest.mark.parametrize("text", MALICIOUS)
def test_malicious_ids_map_to_portable_names(text):
    stem = safe_file_stem(text)
    assert PORTABLE.match(stem), stem
    assert "/" not in stem and "\\" not in stem and not stem.startswith((".", "-"))
    assert len(stem) <= MAX_STEM_LENGTH + 1 + HASH_DIGITS
    assert stem.split(".")[0].upper() not in {"CON", "NUL"}
    # a changed id carries the hash of its own text (SHA-256, FIPS 180-4)
    expected = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:HASH_DIGITS]
    assert stem.endswith("-" + expected)


def test_stems_are_collision_free():
    texts = MALICIOUS + ["a_b", "a-b", "a.b", "etc_passwd", "S1-03", "s1-03",
                         safe_file_stem("a/b"), safe_file_stem("../../../etc/passwd")]
    stems = [safe_file_stem(t) for t in texts]
    assert len(set(stems)) == len(set(texts))


@pytest.mark.parametrize("text", MALICIOUS)
def test_a_file_named_by_any_id_is_written_inside_the_folder(tmp_path, text):
    folder = tmp_path / "site" / "results"
    folder.mkdir(parents=True)
    path = folder / f"prior-{safe_file_stem(text)}.png"
    path.write_bytes(b"x")
    assert path.parent == folder and is_inside(folder, path)
    assert [p.name for p in folder.iterdir()] == [path.name]


def test_non_text_id_is_an_input_error():
    with pytest.raises(InputError):
        safe_file_stem(12)


def test_inside_site_follows_links(tmp_path):
    site, outside = tmp_path / "site", tmp_path / "outside"
    (site / "campaigns" / "a").mkdir(parents=True)
    outside.mkdir()
    (outside / "secret.csv").write_text("root:x:0:0\n")
    inside = site / "campaigns" / "a" / "cores.csv"
    inside.write_text("zone\n")
    assert inside_site(site, inside) == inside.resolve()
    (site / "campaigns" / "a" / "link.csv").symlink_to(outside / "secret.csv")
    (site / "campaigns" / "b").symlink_to(outside, target_is_directory=True)
    (site / "ledger.sqlite").symlink_to(outside / "missing.sqlite")   # dangling
    (site / "campaigns" / "a" / "ok.csv").symlink_to(inside)           # link within the site
    for path in (site / "campaigns" / "a" / "link.csv", site / "campaigns" / "b",
                 site / "campaigns" / "b" / "secret.csv", site / "ledger.sqlite",
                 site / ".." / "outside" / "secret.csv"):
        with pytest.raises(InputError) as info:
            inside_site(site, path, what="campaign file")
        assert "outside the site folder" in str(info.value)
        assert "root:x" not in str(info.value)
        assert not is_inside(site, path)
    assert inside_site(site, site / "campaigns" / "a" / "ok.csv") == inside.resolve()


def test_a_site_reached_through_a_link_is_fine(tmp_path):
    real = tmp_path / "real"
    (real / "campaigns").mkdir(parents=True)
    alias = tmp_path / "alias"
    alias.symlink_to(real, target_is_directory=True)
    assert inside_site(alias, alias / "campaigns") == (real / "campaigns").resolve()


def test_site_subfolder_creates_and_refuses_links_out(tmp_path):
    site, outside = tmp_path / "site", tmp_path / "outside"
    site.mkdir()
    outside.mkdir()
    made = site_subfolder(site, "results", "reports")
    assert made == site / "results" / "reports" and made.is_dir()
    assert site_subfolder(site, "results", "reports") == made  # again: fine
    (site / "results" / "plots").symlink_to(outside, target_is_directory=True)
    with pytest.raises(InputError, match="outside the site folder"):
        site_subfolder(site, "results", "plots")
    for bad in ("..", "a/b", ""):
        with pytest.raises(InputError, match="plain folder name"):
            site_subfolder(site, bad)
    (site / "afile").write_text("x")
    with pytest.raises(InputError, match="found a file"):
        site_subfolder(site, "afile")
    assert list(outside.iterdir()) == []


def test_remove_stale_temporaries_only_old_matching_files(tmp_path):
    old = tmp_path / ".report.html.abc.tmp"
    young = tmp_path / ".report.json.def.tmp"
    other = tmp_path / "report.html"
    for path in (old, young, other):
        path.write_text("x")
    hour_ago = time.time() - 3600
    os.utime(old, (hour_ago, hour_ago))
    os.utime(other, (hour_ago, hour_ago))
    assert remove_stale_temporaries(tmp_path, ".*.tmp", older_than=600) == [old]
    assert not old.exists() and young.exists() and other.exists()
    assert remove_stale_temporaries(tmp_path / "missing", ".*.tmp") == []


def test_replace_atomically_keeps_the_old_file_when_the_writer_fails(tmp_path):
    # common practice (write-then-rename): the old content survives a failed write and no
    # temporary file is left behind; a successful write replaces it in one step
    path = tmp_path / "sub" / "result.json"
    replace_atomically(path, lambda tmp: open(tmp, "w").write("first"), suffix=".json.tmp")
    assert path.read_text() == "first"

    def half_then_fail(tmp):
        open(tmp, "w").write("half")
        raise OSError("disk full")

    with pytest.raises(OSError):
        replace_atomically(path, half_then_fail, suffix=".json.tmp")
    assert path.read_text() == "first"
    assert sorted(p.name for p in path.parent.iterdir()) == ["result.json"]
