"""Benchmark: hostile inputs through the readers, the site file and the CLI import.

Builds its own set of hostile inputs (issue 16): implausible values, values for the soft
range, number conventions, Python-only literals, huge cells, XLSX stray cells and a zip
bomb, deep and huge TOML, bad site geometry, EN 206 exposure classes, console markup, plus
seeded random mixtures of all of them. Each input runs in a worker process with a time
limit and is judged against what it should give:

    clean refusal     InputError where a refusal is right
    correct result    accepted with the right values / flags
    silent acceptance accepted where it should have been refused or flagged
    refused valid     refused although the input is valid
    wrong result      accepted with wrong values
    traceback         any other exception (or a traceback on the CLI)
    hang              no answer within the time limit

A sample of the cases also goes through ``assess site import`` in a subprocess (exit 2
with "Input error:" and no traceback is a clean refusal).

    python benchmarks/fuzz_inputs.py                       # about 2 minutes
    python benchmarks/fuzz_inputs.py --random 300 --cli 30 --timeout 20
    python benchmarks/fuzz_inputs.py --code /path/to/older/checkout   # the same cases there

The goal is zero in the last four columns.
"""

from __future__ import annotations

import argparse
import io
import json
import math
import os
import random
import select
import subprocess
import sys
import tempfile
import time
import zipfile
from collections import Counter, defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
OUTCOMES = ("clean refusal", "correct result", "silent acceptance", "refused valid",
            "wrong result", "traceback", "hang")
SITE_OPTIONS = {"binder_content": 350.0, "concrete_density": 2400.0, "known_zones": ["Z1"],
                "known_members": {"M1": "Z1"}, "member_depths": {"M1": 200.0}}
#: accepted quantities must lie inside these (hard plausibility ranges, canonical units)
HARD = {"core_strength": (1, 250), "cover": (0, 300), "carbonation_depth": (0, 300),
        "chloride": (0, 15), "potential": (-1500, 500), "yield_strength": (150, 1000),
        "tensile_strength": (200, 1500), "elongation": (0, 100), "max_pit_depth": (0, 60)}


# --------------------------------------------------------------------------- cases
def case(group, name, target, filename, data, expect, check=None):
    return {"group": group, "name": name, "target": target, "file": filename, "data": data,
            "expect": expect, "check": check or {}}


def csv(text: str) -> bytes:
    return text.encode("utf-8")


CORES = "zone,core_id,diameter [{d}],length [mm],strength [MPa]\nZ1,C0,100,200,35\nZ1,C1,{dia},200,{s}\n"
COVER = "zone,member,location_id,cover [mm]\nZ1,,P0,30\nZ1,{m},P1,{v}\n"
CHLORIDE = ("zone,profile_id,depth_from [mm],depth_to [mm],chloride [{u}]\n"
            "Z1,P1,0,10,0.5\nZ1,P1,{a},{b},{c}\n")
HALFCELL = "zone,location_id,potential [mV CSE]\nZ1,P0,-200\nZ1,P1,{v}\n"
TENSILE = "zone,specimen_id,diameter [mm],yield_strength [MPa]\nZ1,T0,16,500\nZ1,T1,{d},{y}\n"
LOSS = "zone,breakout_id,bar_diameter [mm],residual_diameter [mm]\nZ1,B0,16,15\nZ1,B1,{d},{r}\n"
CARB = "zone,location_id,carbonation_depth [{u}]\nZ1,P0,10\nZ1,P1,{v}\n"


def value_cases():
    out = []
    for s in ("900", "1e6", "1e-9", "1e308", "400", "-30", "0"):
        out.append(case("implausible value", f"core strength {s} MPa", "reader", "cores.csv",
                        csv(CORES.format(d="mm", dia=100, s=s)), "refuse"))
    out += [
        case("implausible value", "core diameter 1e308 in", "reader", "cores.csv",
             csv(CORES.format(d="in", dia="1e308", s=35)), "refuse"),
        case("implausible value", "cover 5000 mm", "reader", "cover.csv",
             csv(COVER.format(m="", v=5000)), "refuse"),
        case("implausible value", "cover 250 mm in a 200 mm member", "reader", "cover.csv",
             csv(COVER.format(m="M1", v=250)), "refuse"),
        case("implausible value", "chloride 150 % binder", "reader", "chloride.csv",
             csv(CHLORIDE.format(u="% binder", a=10, b=20, c=150)), "refuse"),
        case("implausible value", "chloride 150 % concrete (1029 % binder)", "reader",
             "chloride.csv", csv(CHLORIDE.format(u="% concrete", a=10, b=20, c=150)), "refuse"),
        case("implausible value", "chloride increment at 5 m", "reader", "chloride.csv",
             csv(CHLORIDE.format(u="% binder", a=5000, b=5010, c=0.4)), "refuse"),
        case("implausible value", "carbonation 5 m", "reader", "carbonation.csv",
             csv(CARB.format(u="mm", v=5000)), "refuse"),
        case("implausible value", "half-cell +5000 mV CSE", "reader", "halfcell.csv",
             csv(HALFCELL.format(v=5000)), "refuse"),
        case("implausible value", "half-cell -1e6 mV CSE", "reader", "halfcell.csv",
             csv(HALFCELL.format(v="-1e6")), "refuse"),
        case("implausible value", "200 mm bar", "reader", "section_loss.csv",
             csv(LOSS.format(d=200, r=190)), "refuse"),
        case("implausible value", "yield 5000 MPa", "reader", "tensile.csv",
             csv(TENSILE.format(d=16, y=5000)), "refuse"),
    ]
    soft = [("core strength 130 MPa", "cores.csv", CORES.format(d="mm", dia=100, s=130),
             "unusual core strength"),
            ("cover 150 mm", "cover.csv", COVER.format(m="", v=150), "unusual cover"),
            ("chloride 8 % binder", "chloride.csv",
             CHLORIDE.format(u="% binder", a=10, b=20, c=8), "unusual chloride content"),
            ("half-cell -1000 mV", "halfcell.csv", HALFCELL.format(v=-1000),
             "unusual half-cell potential"),
            ("yield 200 MPa", "tensile.csv", TENSILE.format(d=16, y=200),
             "unusual yield strength")]
    out += [case("soft range: keep and flag", name, "reader", f, csv(text), "flag",
                 {"flag": flag}) for name, f, text, flag in soft]
    return out


def number_cases():
    out = []
    for cell in ("3_5", "\u0663\u0665", "\uff13\uff15", "inf", "-inf", "nan", "1e309",
                 "\u221230", "0x1e", "1" * 5000):
        out.append(case("Python-only literal", f"cover {cell[:12]!r}", "reader", "cover.csv",
                        csv(COVER.format(m="", v=cell)), "refuse"))
    out += [
        case("number convention", "'1.234' alone in a ';' file", "reader", "cover.csv",
             csv("zone;location_id;cover [mm]\nZ1;P0;30\nZ1;P1;1.234\n"), "refuse"),
        case("number convention", "decimal comma in a ';' file", "reader", "cover.csv",
             csv("zone;location_id;cover [mm]\nZ1;P0;30,5\nZ1;P1;28\n"), "accept",
             {"values": [30.5, 28.0]}),
        case("number convention", "'1.234,5' and '0,5' in a ';' file", "reader", "halfcell.csv",
             csv("zone;location_id;potential [mV CSE]\nZ1;P0;-1.234,5\nZ1;P1;-0,5\n"),
             "accept", {"values": [-1234.5, -0.5]}),
        case("number convention", "decimal comma and point mixed", "reader", "cover.csv",
             csv("zone;location_id;cover [mm]\nZ1;P0;30,5\nZ1;P1;28.5\n"), "refuse"),
        case("number convention", "quoted '1,234.5' in a ',' file", "reader", "halfcell.csv",
             csv('zone,location_id,potential [mV CSE]\nZ1,P0,"-1,234.5"\nZ1,P1,-200\n'),
             "accept", {"values": [-1234.5, -200.0]}),
        case("header", "lab-style 'Diameter (mm)'", "reader", "cores.csv",
             csv("zone,core_id,Diameter (mm),Length (mm),Strength (MPa)\nZ1,C1,100,200,35\n"),
             "accept", {"values": [35.0, 35.0 * 1.06]}),
    ]
    return out


def big_cell_cases():
    out = []
    for size in (200_000, 5_000_000):
        out.append(case("huge cell", f"{size // 1000} kB cell", "reader", "cover.csv",
                        csv(COVER.format(m="", v=30) + f"Z1,,P2,{'9' * size}\n"), "refuse"))
        out.append(case("huge cell", f"{size // 1000} kB unclosed quote", "reader", "cover.csv",
                        csv(COVER.format(m="", v=30) + 'Z1,,"P2,' + "x" * size + "\n"),
                        "refuse"))
    return out


def _workbook(rows, edit=None) -> bytes:
    from openpyxl import Workbook
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = "cover"
    for row in rows:
        sheet.append(row)
    buffer = io.BytesIO()
    workbook.save(buffer)
    if edit is None:
        return buffer.getvalue()
    with zipfile.ZipFile(io.BytesIO(buffer.getvalue())) as archive:
        parts = {i.filename: archive.read(i.filename) for i in archive.infolist()}
    parts["xl/worksheets/sheet1.xml"] = edit(parts["xl/worksheets/sheet1.xml"])
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as archive:
        for name, data in parts.items():
            archive.writestr(name, data)
    return out.getvalue()


def xlsx_cases(bomb_mb: int):
    good = [["zone", "location_id", "cover [mm]"], ["Z1", "P1", 30], ["Z1", "P2", 31.5]]

    def stray_value(xml):
        return xml.replace(b"</sheetData>", b'<row r="1048576"><c r="XFD1048576" t="inlineStr">'
                                            b"<is><t>x</t></is></c></row></sheetData>")

    def stray_empty(xml):
        import re
        xml = re.sub(rb'<dimension ref="[^"]*"/>', b'<dimension ref="A1:XFD1048576"/>', xml)
        return xml.replace(b"</sheetData>",
                           b'<row r="1048576"><c r="XFD1048576" s="0"/></row></sheetData>')

    def bomb(xml):
        return xml.replace(b"<sheetData>", b"<!--" + b" " * (bomb_mb * 1024 * 1024)
                           + b"--><sheetData>")

    return [
        case("XLSX", "stray value at XFD1048576", "reader", "cover.xlsx",
             lambda: _workbook(good, stray_value), "refuse"),
        case("XLSX", "styled empty cell at XFD1048576, dimension A1:XFD1048576", "reader",
             "cover.xlsx", lambda: _workbook(good, stray_empty), "accept",
             {"values": [30.0, 31.5]}),
        case("XLSX", f"{bomb_mb} MB of blanks in a comment (zip bomb)", "reader", "cover.xlsx",
             lambda: _workbook(good, bomb), "refuse"),
        case("XLSX", "text '30,5' beside stored numbers", "reader", "cover.xlsx",
             lambda: _workbook([*good, ["Z1", "P3", "30,5"]]), "refuse"),
    ]


SITE_TEMPLATE = (ROOT / "inspection_io" / "templates" / "site.toml").read_text()


def site_text(old: str, new: str) -> bytes:
    assert old in SITE_TEMPLATE, old
    return SITE_TEMPLATE.replace(old, new, 1).encode()


def toml_cases():
    members_start = SITE_TEMPLATE.index("[members.M1]")
    no_members = SITE_TEMPLATE[:SITE_TEMPLATE.rindex("\n#", 0, members_start)] + "\n"
    campaign = 'name = "x"\ndate = 2020-01-01\n'
    return [
        case("TOML", "50 000 nested arrays", "campaign", "campaign.toml",
             (campaign + "x = " + "[" * 50_000 + "]" * 50_000 + "\n").encode(), "refuse"),
        case("TOML", "100 000 nested inline tables", "campaign", "campaign.toml",
             (campaign + "x = " + "{a=" * 100_000 + "1" + "}" * 100_000 + "\n").encode(),
             "refuse"),
        case("TOML", "5000-digit integer", "campaign", "campaign.toml",
             (campaign + "n = " + "1" * 5000 + "\n").encode(), "refuse"),
        case("site file", "beam steel 500 % of its section", "site", "site.toml",
             site_text("bar_spacing = 150", "steel_area = 1000000"), "refuse"),
        case("site file", "slab width 1e-6 mm", "site", "site.toml",
             site_text("width = 1000", "width = 1e-6"), "refuse"),
        case("site file", "zero members", "site", "site.toml", no_members.encode(), "refuse"),
        case("site file", "depth 16^300 (float overflow)", "site", "site.toml",
             site_text("depth = 200", "depth = 0x" + "f" * 300), "refuse"),
        case("site file", "EN 206 'XC3, XD3, XF4'", "site", "site.toml",
             site_text('exposure = "exposed deck"', 'exposure = "XC3, XD3, XF4"'), "accept",
             {"exposure": "exposed deck", "classes": ["XC3", "XD3", "XF4"]}),
        case("site file", "EN 206 'XC1'", "site", "site.toml",
             site_text('exposure = "exposed deck"', 'exposure = "XC1"'), "accept",
             {"exposure": "internal", "classes": ["XC1"]}),
        case("site file", "target_beta without a reason", "site", "site.toml",
             site_text('tension_face = "bottom"', 'tension_face = "bottom"\ntarget_beta = 3.1'),
             "refuse"),
        case("site file", "target_beta with a reason", "site", "site.toml",
             site_text('tension_face = "bottom"', 'tension_face = "bottom"\ntarget_beta = 3.1\n'
                       'target_beta_reason = "remaining life 10 years, agreed"'), "accept",
             {"target_beta": 3.1}),
    ]


def markup_cases():
    return [
        case("console markup", "zone '[/x]'", "reader", "cover.csv",
             csv("zone,location_id,cover [mm]\n[/x],P1,30\n"), "refuse", {"shows": "'[/x]'"}),
        case("console markup", "header 'cover [unit]'", "reader", "cover.csv",
             csv("zone,location_id,cover [unit]\nZ1,P1,30\n"), "refuse",
             {"shows": "'cover [unit]'"}),
        case("console markup", "note '[bold]x[/bold]' is kept", "reader", "cover.csv",
             csv("zone,location_id,cover [mm],note\nZ1,P1,30,[bold]x[/bold]\n"), "accept",
             {"values": [30.0]}),
    ]


HOSTILE_CELLS = ["3_5", "inf", "nan", "1e308", "1e309", "-1e6", "1.234", "1,234", "3,5",
                 "\u0663\u0665", "900", "5000", "-0", "", "[/x]", "\x00", "x" * 300, "1" * 60,
                 "=1+1", "0x1F", "1.2.3", "\u22125"]


def random_cases(n: int, seed: int):
    """Seeded random near-valid files of every kind with hostile cells mixed in."""
    rng = random.Random(seed)
    templates = [CORES.format(d="mm", dia=100, s=35), COVER.format(m="", v=30),
                 CHLORIDE.format(u="% binder", a=10, b=20, c=0.3), HALFCELL.format(v=-300),
                 TENSILE.format(d=16, y=500), LOSS.format(d=16, r=15),
                 CARB.format(u="mm", v=12)]
    out = []
    for i in range(n):
        lines = rng.choice(templates).strip().split("\n")
        delimiter = rng.choice([",", ",", ";", "\t"])
        cells = [line.split(",") for line in lines]
        for _ in range(rng.randint(1, 3)):
            row = rng.randrange(len(cells))
            col = rng.randrange(len(cells[row]))
            cells[row][col] = rng.choice(HOSTILE_CELLS)
        if rng.random() < 0.2:
            cells[0][rng.randrange(len(cells[0]))] += rng.choice([" [furlong]", " (cm)", "[/x]"])
        text = "\n".join(delimiter.join(c.replace(delimiter, " ") for c in row) for row in cells)
        out.append(case("random mixture", f"random {i}", "reader", "random.csv",
                        csv(text + "\n"), "either"))
    return out


# --------------------------------------------------------------------------- worker
def worker() -> None:
    """Read one JSON request per line, answer one JSON line each (runs in the child)."""
    import traceback

    from inspection_io.errors import InputError
    from inspection_io.readers import read_campaign_file
    from inspection_io.site import load_campaign, load_site

    for line in sys.stdin:
        request = json.loads(line)
        path = Path(request["path"])
        try:
            if request["target"] == "reader":
                try:
                    result = read_campaign_file(path, **SITE_OPTIONS)
                except TypeError:          # an older checkout without member_depths
                    options = {k: v for k, v in SITE_OPTIONS.items() if k != "member_depths"}
                    result = read_campaign_file(path, **options)
                obs = result.observations
                answer = {"outcome": "accepted",
                          "rows": [[q, float(v), f] for q, v, f in
                                   zip(obs["quantity"], obs["value"], obs["flags"])]}
            elif request["target"] == "site":
                site = load_site(path)
                zone = next(iter(site.zones.values()))
                member = next(iter(site.members.values()))
                answer = {"outcome": "accepted", "exposure": zone.exposure,
                          "classes": list(getattr(zone, "exposure_classes", ())),
                          "target_beta": getattr(member, "target_beta", None),
                          "numbers": [member.depth, member.width, member.tension_steel_area]}
            else:
                load_campaign(path)
                answer = {"outcome": "accepted"}
        except InputError as error:
            answer = {"outcome": "refused", "message": str(error)[:300]}
        except BaseException as error:  # noqa: BLE001  (the benchmark counts every escape)
            answer = {"outcome": "exception", "type": type(error).__name__,
                      "message": str(error)[:200],
                      "where": traceback.format_exc().splitlines()[-3:-1]}
        sys.stdout.write(json.dumps(answer) + "\n")
        sys.stdout.flush()


class Worker:
    """A child process that runs requests one at a time, restarted after a hang."""

    def __init__(self, code: Path):
        self.code = code
        self.process = None

    def start(self):
        env = dict(os.environ, PYTHONPATH=str(self.code))
        self.process = subprocess.Popen(
            [sys.executable, str(Path(__file__).resolve()), "--worker"], stdin=subprocess.PIPE,
            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, env=env, text=True, bufsize=1,
            cwd=tempfile.gettempdir())

    def run(self, request: dict, timeout: float) -> dict:
        if self.process is None or self.process.poll() is not None:
            self.start()
        self.process.stdin.write(json.dumps(request) + "\n")
        self.process.stdin.flush()
        ready, _, _ = select.select([self.process.stdout], [], [], timeout)
        if not ready:
            self.stop()
            return {"outcome": "hang"}
        line = self.process.stdout.readline()
        if not line:
            self.stop()
            return {"outcome": "exception", "type": "worker died", "message": ""}
        return json.loads(line)

    def stop(self):
        if self.process is not None:
            self.process.kill()
            self.process.wait()
            self.process = None


# --------------------------------------------------------------------------- judging
def sane(rows) -> bool:
    for quantity, value, _ in rows:
        if not math.isfinite(value):
            return False
        if quantity in HARD and not HARD[quantity][0] <= value <= HARD[quantity][1]:
            return False
        if quantity == "residual_area_ratio" and not 0.0 <= value <= 1.0:
            return False
    return True


def judge(item: dict, answer: dict) -> str:
    outcome, expect, check = answer["outcome"], item["expect"], item["check"]
    if outcome in ("hang",):
        return "hang"
    if outcome == "exception":
        return "traceback"
    if outcome == "refused":
        return "clean refusal" if expect in ("refuse", "either") else "refused valid"
    # accepted
    if expect == "refuse":
        return "silent acceptance"
    if item["target"] == "reader":
        rows = answer["rows"]
        if not sane(rows):
            return "silent acceptance"
        if expect == "flag":
            return "correct result" if any(check["flag"] in r[2].split(";") for r in rows) \
                else "silent acceptance"
        if "values" in check:
            core_like = [r[1] for r in rows if r[0] not in ("insitu_strength",)]
            wanted = check["values"]
            if item["file"].startswith("cores"):
                core_like = [r[1] for r in rows]
            ok = len(core_like) == len(wanted) and all(
                math.isclose(a, b, rel_tol=1e-9) for a, b in zip(core_like, wanted))
            return "correct result" if ok else "wrong result"
        return "correct result"
    if item["target"] == "site" and check:
        ok = all(answer.get(key) == value for key, value in check.items())
        return "correct result" if ok else "wrong result"
    return "correct result"


def cli_judge(item: dict, completed: subprocess.CompletedProcess | None) -> str:
    if completed is None:
        return "hang"
    out = completed.stdout + completed.stderr
    if "Traceback" in out or completed.returncode not in (0, 2):
        return "traceback"
    if completed.returncode == 2:
        if not completed.stderr.startswith("Input error:"):
            return "traceback"
        shows = item["check"].get("shows")
        if shows and shows not in completed.stderr.replace("\n", ""):
            return "wrong result"          # the message lost text to console markup
        return "clean refusal" if item["expect"] in ("refuse", "either") else "refused valid"
    if item["expect"] == "refuse":
        return "silent acceptance"
    if item["expect"] == "flag":
        return "correct result"        # the CLI does not print flags; the reader check counts
    return "correct result"


def run_cli(item: dict, code: Path, timeout: float) -> subprocess.CompletedProcess | None:
    with tempfile.TemporaryDirectory() as tmp:
        site = Path(tmp) / "site"
        campaign = site / "campaigns" / "c1"
        campaign.mkdir(parents=True)
        if item["target"] == "site":
            (site / "site.toml").write_bytes(item["bytes"])
            (campaign / "campaign.toml").write_text('name = "C1"\ndate = 2026-01-01\n')
            (campaign / "cover.csv").write_text("zone,location_id,cover [mm]\nZ1,P1,30\n")
        elif item["target"] == "campaign":
            (site / "site.toml").write_text(SITE_TEMPLATE)
            (campaign / "campaign.toml").write_bytes(item["bytes"])
        else:
            (site / "site.toml").write_text(SITE_TEMPLATE)
            (campaign / "campaign.toml").write_text('name = "C1"\ndate = 2026-01-01\n')
            (campaign / item["file"]).write_bytes(item["bytes"])
        env = dict(os.environ, PYTHONPATH=str(code), COLUMNS="200")
        try:
            return subprocess.run(
                [sys.executable, "-c", "from assess.cli import main; main()", "site", "import",
                 str(site)], capture_output=True, text=True, timeout=timeout, env=env,
                check=False, cwd=tmp)     # cwd: "python -c" puts it first on sys.path
        except subprocess.TimeoutExpired:
            return None


# --------------------------------------------------------------------------- main
def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--worker", action="store_true", help=argparse.SUPPRESS)
    parser.add_argument("--random", type=int, default=150, help="random mixtures (default 150)")
    parser.add_argument("--seed", type=int, default=20261203)
    parser.add_argument("--cli", type=int, default=16, help="cases also run through the CLI")
    parser.add_argument("--timeout", type=float, default=30.0, help="seconds per case")
    parser.add_argument("--bomb-mb", type=int, default=300, help="size of the zip-bomb sheet")
    parser.add_argument("--code", type=Path, default=ROOT,
                        help="checkout whose inspection_io/assess to test (default: this one)")
    parser.add_argument("--verbose", action="store_true", help="print every non-clean case")
    args = parser.parse_args()
    if args.worker:
        worker()
        return

    items = (value_cases() + number_cases() + big_cell_cases() + xlsx_cases(args.bomb_mb)
             + toml_cases() + markup_cases() + random_cases(args.random, args.seed))
    counts: dict[str, Counter] = defaultdict(Counter)
    notes = []
    runner = Worker(args.code.resolve())
    start = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        for index, item in enumerate(items):
            data = item["data"]() if callable(item["data"]) else item["data"]
            item["bytes"] = data
            path = Path(tmp) / f"{index}" / item["file"]
            path.parent.mkdir()
            path.write_bytes(data)
            answer = runner.run({"path": str(path), "target": item["target"]}, args.timeout)
            verdict = judge(item, answer)
            counts[item["group"]][verdict] += 1
            if verdict not in ("clean refusal", "correct result"):
                notes.append(f"  {verdict:17s} {item['group']}: {item['name']} -> "
                             f"{answer.get('type', '')} {answer.get('message', '')[:140]}")
        runner.stop()
        seconds = time.perf_counter() - start
        # every console-markup case, then cases spread over the other groups
        markup = [it for it in items if it["group"] == "console markup"]
        others = [it for it in items if it["group"] not in ("console markup", "random mixture")]
        spread = others[::max(1, len(others) // max(args.cli - len(markup), 1))]
        cli_items = (markup + spread)[:args.cli] if args.cli else []
        cli_counts: Counter = Counter()
        cli_start = time.perf_counter()
        for item in cli_items:
            verdict = cli_judge(item, run_cli(item, args.code.resolve(), args.timeout))
            cli_counts[verdict] += 1
            if verdict not in ("clean refusal", "correct result"):
                notes.append(f"  CLI {verdict:13s} {item['group']}: {item['name']}")
        cli_seconds = time.perf_counter() - cli_start

    width = max(len(g) for g in counts) + 2
    header = f"{'group':{width}s} {'n':>4s} " + " ".join(f"{o[:12]:>12s}" for o in OUTCOMES)
    print(f"code under test: {args.code.resolve()}")
    print(header)
    total: Counter = Counter()
    for group, counter in counts.items():
        total.update(counter)
        print(f"{group:{width}s} {sum(counter.values()):4d} "
              + " ".join(f"{counter[o]:12d}" for o in OUTCOMES))
    print(f"{'all (library)':{width}s} {sum(total.values()):4d} "
          + " ".join(f"{total[o]:12d}" for o in OUTCOMES))
    if cli_items:
        print(f"{'CLI site import':{width}s} {sum(cli_counts.values()):4d} "
              + " ".join(f"{cli_counts[o]:12d}" for o in OUTCOMES))
    print(f"library: {len(items)} inputs in {seconds:.1f} s (timeout {args.timeout:g} s per "
          f"input); CLI: {len(cli_items)} inputs in {cli_seconds:.1f} s")
    if notes and (args.verbose or len(notes) <= 40):
        print("not clean:")
        print("\n".join(notes))


if __name__ == "__main__":
    main()
