"""A kill (SIGKILL) in the middle of an import leaves the ledger exactly as it was.

A driver subprocess imports the package once, then forks one child per trial; each
child imports a large campaign file and is killed with SIGKILL after a random delay.
The child's inserts run in small chunks with short pauses (a patched
`inspection_io.ledger._executemany`), and it writes a marker file when it is inside the
transaction and when the import has returned, so the test knows where each kill landed.
After each kill the ledger must pass SQLite's integrity check and hold either exactly
the rows it had before, or the whole import: never a part of it.
"""

import os
import random
import shutil
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from inspection_io import importing
from inspection_io.importing import import_file
from inspection_io.ledger import APPEND_ONLY_TABLES, LEDGER_NAME, Ledger

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork")

TEMPLATES = Path(importing.__file__).parent / "templates"
N_ROWS = 1000
N_TRIALS = 21

DRIVER = textwrap.dedent("""
    import os, sys, time
    from inspection_io import importing, ledger

    marker = None

    def mark(word):
        with open(marker, "a") as handle:
            handle.write(word + "\\n")

    def slow_executemany(conn, sql, rows, chunk=500):
        mark("in-transaction")
        batch = []
        for row in rows:
            batch.append(row)
            if len(batch) == 25:
                conn.executemany(sql, batch)
                batch = []
                time.sleep(0.001)
        if batch:
            conn.executemany(sql, batch)

    ledger._executemany = slow_executemany
    print("ready", flush=True)
    while True:
        line = sys.stdin.readline()
        if not line.strip():
            break
        site, path, marker = line.rstrip("\\n").split("\\t")
        pid = os.fork()
        if pid == 0:
            try:
                importing.import_file(site, path)
                mark("returned")
            finally:
                os._exit(0)
        print(pid, flush=True)
        sys.stdin.readline()          # the test has killed the child (or let it finish)
        os.waitpid(pid, 0)
        print("reaped", flush=True)
""")


def dump(path: Path) -> dict:
    conn = sqlite3.connect(path)
    try:
        return {t: conn.execute(f"SELECT * FROM {t} ORDER BY rowid").fetchall()
                for t in APPEND_ONLY_TABLES}
    finally:
        conn.close()


def wait_for(path: Path, word: str, timeout: float = 10.0) -> bool:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if path.exists() and word in path.read_text():
            return True
        time.sleep(0.001)
    return False


def test_sigkill_during_import_leaves_ledger_unchanged_or_complete(tmp_path):
    site = tmp_path / "site"
    data = site / "campaigns" / "first"
    data.mkdir(parents=True)
    shutil.copy(TEMPLATES / "site.toml", site / "site.toml")
    (data / "campaign.toml").write_text('name = "First"\ndate = 2026-01-01\n')
    small = data / "cover_small.csv"
    small.write_text("zone,location_id,cover [mm]\nZ1,P1,30\nZ1,P2,35\n")
    import_file(site, small)                       # the ledger already holds something
    ledger_path = site / LEDGER_NAME
    baseline_bytes = ledger_path.read_bytes()
    baseline = dump(ledger_path)

    big = data / "cover_big.csv"
    big.write_text("zone,location_id,cover [mm]\n"
                   + "".join(f"Z1,L{i},{20 + i % 30}\n" for i in range(N_ROWS)))

    driver = subprocess.Popen([sys.executable, "-c", DRIVER], stdin=subprocess.PIPE,
                              stdout=subprocess.PIPE, text=True, cwd=tmp_path)
    rng = random.Random(20261130)
    outcomes = []
    try:
        assert driver.stdout.readline().strip() == "ready"
        for trial in range(N_TRIALS):
            ledger_path.write_bytes(baseline_bytes)
            Path(f"{ledger_path}-journal").unlink(missing_ok=True)
            marker = tmp_path / f"marker-{trial}"
            driver.stdin.write(f"{site}\t{big}\t{marker}\n")
            driver.stdin.flush()
            child = int(driver.stdout.readline())
            if trial % 3 == 0:
                time.sleep(rng.uniform(0.0, 0.3))   # anywhere: before, in or after the write
            else:
                wait_for(marker, "in-transaction")
                time.sleep(rng.uniform(0.0, 0.1))   # inside the write, mostly
            os.kill(child, signal.SIGKILL)          # the child is a zombie at worst: harmless
            driver.stdin.write("\n")
            driver.stdin.flush()
            assert driver.stdout.readline().strip() == "reaped"

            seen = marker.read_text() if marker.exists() else ""
            with Ledger(ledger_path) as ledger:      # rolls back a left-over journal
                conn = ledger.connection()
                assert conn.execute("PRAGMA integrity_check").fetchone() == ("ok",)
                ledger.observations()                # readable
            after = dump(ledger_path)
            if after == baseline:
                outcome = "unchanged"
            else:
                for table in APPEND_ONLY_TABLES:     # old rows untouched
                    assert after[table][:len(baseline[table])] == baseline[table]
                (new_file,) = after["files"][len(baseline["files"]):]
                assert new_file[2] == "cover_big.csv" and new_file[6] == N_ROWS
                assert len(after["raw_rows"]) - len(baseline["raw_rows"]) == N_ROWS
                assert len(after["observations"]) - len(baseline["observations"]) == N_ROWS
                outcome = "complete"
            if "returned" in seen:
                assert outcome == "complete"
            if "in-transaction" not in seen:
                assert outcome == "unchanged"
            outcomes.append((seen.count("in-transaction") > 0, "returned" in seen, outcome))
    finally:
        driver.stdin.close()
        driver.wait(timeout=30)

    killed_mid_write = [o for o in outcomes if o[0] and not o[1] and o[2] == "unchanged"]
    assert len(killed_mid_write) >= N_TRIALS // 3, outcomes

    # after all that, the ledger still imports normally
    ledger_path.write_bytes(baseline_bytes)
    Path(f"{ledger_path}-journal").unlink(missing_ok=True)
    report = import_file(site, big)
    assert report.imported and report.observations == N_ROWS
