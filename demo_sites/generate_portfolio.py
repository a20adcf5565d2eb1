"""Generate an invented portfolio of car parks derived from the demo site.

Every site, name and number is invented. Each site is the demo site
(``demo_sites/tanners-yard``) varied with its own random stream:

- **members**: the ten demo members (the campaign files refer to them) plus
  clones of them with varied span (x U(0.9, 1.1)), depth (-25 / 0 / +25 mm),
  cover (-5 / 0 / +5 mm), bar spacing (125-200 mm) or steel area
  (x U(0.85, 1.15)); ids ``<S|B|C><level>-<nnn>`` with nnn >= 100;
- **age**: year built 1974 + an integer in [-8, 8];
- **target**: consequence class CC2 (3 in 5), CC1 or CC3;
- **data**: a choice of campaigns (all three; the last two; the first two; only
  2025; none, i.e. design information only) and, in the CSV files of cores,
  cover, carbonation and half-cell surveys, each row dropped with a site-wide
  probability U(0, 0.3) (chloride profiles whole), keeping at least two rows
  (one profile) per zone; XLSX, tensile and section-loss files are copied as
  they are;
- **decisions**: the demo's ``decisions.toml`` for three sites in five, with the
  failure cost scaled by U(0.5, 2).

Usage::

    python demo_sites/generate_portfolio.py OUT [--sites 8] [--members 10] [--seed 18]
    python demo_sites/generate_portfolio.py OUT --sites 1 --members 400 --campaigns all

writes ``OUT/portfolio.toml`` and one site folder per site in OUT. The same
arguments give the same bytes. Uses the standard library and numpy only; it
does not import `assess`.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import io
import shutil
from pathlib import Path

import numpy as np

try:
    import tomllib
except ModuleNotFoundError:  # Python 3.10
    import tomli as tomllib

DEMO = Path(__file__).resolve().parent / "tanners-yard"
CAMPAIGNS = ("2009-first-survey", "2017-condition-survey", "2025-principal-inspection")
CAMPAIGN_CHOICES = {"all": CAMPAIGNS, "last-two": CAMPAIGNS[1:], "first-two": CAMPAIGNS[:2],
                    "latest": CAMPAIGNS[2:], "none": ()}
CAMPAIGN_WEIGHTS = {"all": 0.4, "last-two": 0.2, "first-two": 0.15, "latest": 0.15, "none": 0.1}
THINNED = ("cores.csv", "cover.csv", "carbonation.csv", "halfcell.csv", "chloride.csv")
FIRST = ("Alder", "Brook", "Cinder", "Dock", "Elm", "Foundry", "Granary", "Harbour", "Ivy",
         "Jubilee", "Kiln", "Linden", "Malt", "Nether", "Orchard", "Pike", "Quarry", "Rope",
         "Saltings", "Tallow", "Upper Mill", "Vale", "Weir", "Yarrow")
SECOND = ("Street", "Lane", "Row", "Yard", "Court", "Wharf", "Gate", "Square")
MEMBER_KEYS = ("zone", "kind", "span", "span_x", "span_y", "depth", "width", "cover",
               "bar_diameter", "bar_spacing", "steel_area", "shear_reinforcement",
               "tension_face", "tributary_width", "slab_depth", "column_size", "position")


def _fmt(value) -> str:
    """TOML text of a value (no library float formatting, so bytes are stable)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        text = f"{value:.3f}".rstrip("0")
        return text + "0" if text.endswith(".") else text
    if isinstance(value, (dt.date,)):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(_fmt(v) for v in value) + "]"
    return '"' + str(value).replace("\\", "\\\\").replace('"', '\\"') + '"'


def _table(name: str, body: dict) -> str:
    lines = [f"[{name}]"]
    lines += [f"{key} = {_fmt(value)}" for key, value in body.items()]
    return "\n".join(lines) + "\n"


def site_name(index: int) -> str:
    """Invented name of the site with this index (unique for any index)."""
    first = FIRST[index % len(FIRST)]
    second = SECOND[(index * 3) % len(SECOND)]
    round_ = index // len(FIRST)
    return f"{first} {second}" + (f" {round_ + 1}" if round_ else "")


def slug(name: str) -> str:
    return "-".join(name.lower().split())


def clone_member(template: dict, rng: np.random.Generator) -> dict:
    """A member like ``template`` with varied geometry [m, mm]."""
    member = dict(template)
    for key in ("span", "span_x", "span_y"):
        if key in member:
            member[key] = round(float(member[key]) * float(rng.uniform(0.9, 1.1)), 1)
    if member["kind"] != "beam":
        member["depth"] = int(member["depth"]) + int(rng.choice([-25, 0, 25]))
    member["cover"] = max(15, int(member["cover"]) + int(rng.choice([-5, 0, 5])))
    if "bar_spacing" in member:
        member["bar_spacing"] = int(rng.choice([125, 150, 175, 200]))
    if "steel_area" in member:
        member["steel_area"] = round(member["steel_area"] * float(rng.uniform(0.85, 1.15)))
    return member


def members_for(demo_members: dict, count: int, rng: np.random.Generator) -> dict:
    """The ten demo members plus ``count - 10`` clones (at least the ten)."""
    members = {k: dict(v) for k, v in demo_members.items()}
    ids = list(demo_members)
    for number in range(100, 100 + max(0, count - len(ids))):
        template_id = ids[int(rng.integers(len(ids)))]
        template = demo_members[template_id]
        level = template["zone"][1:]
        members[f"{template_id[0]}{level}-{number}"] = clone_member(template, rng)
    return members


def _thin_csv(text: str, drop: float, rng: np.random.Generator, group_column: str) -> str:
    """Drop rows (or groups of rows) with probability ``drop``, >= 2 rows / 1 group per zone."""
    rows = list(csv.reader(io.StringIO(text)))
    header, body = rows[0], rows[1:]
    zone_at, group_at = header.index("zone"), header.index(group_column)
    groups: dict[str, list] = {}
    for row in body:
        groups.setdefault(row[group_at], []).append(row)
    keep_groups = {g: rng.random() >= drop for g in groups}
    kept = [row for row in body if keep_groups[row[group_at]]]
    minimum = 1 if group_column == "profile_id" else 2
    for zone in dict.fromkeys(row[zone_at] for row in body):
        zone_groups = [g for g in groups if groups[g][0][zone_at] == zone]
        if sum(keep_groups[g] for g in zone_groups) < minimum:
            for g in zone_groups[:minimum]:
                keep_groups[g] = True
    kept = [row for row in body if keep_groups[row[group_at]]]
    out = io.StringIO()
    csv.writer(out, lineterminator="\n").writerows([header] + kept)
    return out.getvalue()


def generate_site(folder: Path, index: int, *, seed: int = 18, members: int = 10,
                  campaigns: str | None = None, thin: bool = True,
                  decisions: bool | None = None) -> dict:
    """Write one invented site into ``folder``; returns what was chosen."""
    rng = np.random.default_rng([seed, index])
    demo = tomllib.loads((DEMO / "site.toml").read_text(encoding="utf-8"))
    name = site_name(index)
    year = 1974 + int(rng.integers(-8, 9))
    consequence = str(rng.choice(["CC2", "CC2", "CC2", "CC1", "CC3"]))
    choice = campaigns or str(rng.choice(list(CAMPAIGN_WEIGHTS),
                                         p=list(CAMPAIGN_WEIGHTS.values())))
    drop = float(rng.uniform(0.0, 0.3)) if thin else 0.0
    with_decisions = bool(rng.random() < 0.6) if decisions is None else decisions
    chosen_members = members_for(demo["members"], members, rng)

    folder.mkdir(parents=True)
    site = dict(demo["site"], name=f"{name} car park (invented)", year_built=year)
    target = dict(demo["target"], consequence_class=consequence)
    parts = [("# Invented site generated by demo_sites/generate_portfolio.py from the demo site.\n"
             "# Every name and number is invented. Lengths in mm, spans in m, loads in kN/m2.\n"),
             _table("site", site), _table("target", target),
             _table("materials", demo["materials"]), _table("loads", demo["loads"])]
    parts += [_table(f"zones.{z}", body) for z, body in demo["zones"].items()]
    for member_id, body in chosen_members.items():
        parts.append(_table(f"members.{member_id}",
                            {k: body[k] for k in MEMBER_KEYS if k in body}))
    (folder / "site.toml").write_text("\n".join(parts), encoding="utf-8")

    campaigns_dir = folder / "campaigns"
    campaigns_dir.mkdir()
    for campaign in CAMPAIGN_CHOICES[choice]:
        source, target_dir = DEMO / "campaigns" / campaign, campaigns_dir / campaign
        target_dir.mkdir()
        for path in sorted(source.iterdir()):
            if path.name in THINNED and drop > 0:
                group = "profile_id" if path.name == "chloride.csv" else _first_column(path)
                (target_dir / path.name).write_text(
                    _thin_csv(path.read_text(encoding="utf-8"), drop, rng, group), encoding="utf-8")
            else:
                shutil.copyfile(path, target_dir / path.name)
    failure_scale = float(rng.uniform(0.5, 2.0))
    if with_decisions:
        text = (DEMO / "decisions.toml").read_text(encoding="utf-8")
        cost = int(round(1_500_000 * failure_scale, -3))
        text = text.replace("failure_cost = 1_500_000", f"failure_cost = {cost}")
        (folder / "decisions.toml").write_text(text, encoding="utf-8")
    return {"key": slug(name), "name": name, "year_built": year, "consequence_class": consequence,
            "campaigns": choice, "row_drop": round(drop, 3), "members": len(chosen_members),
            "decisions": with_decisions}


def _first_column(path: Path) -> str:
    return path.read_text(encoding="utf-8").split("\n", 1)[0].split(",")[0]


def _member_count(text: str, index: int, seed: int) -> int:
    """``"12"`` -> 12; ``"10-16"`` -> a count drawn per site from that range."""
    if "-" in text:
        low, high = (int(v) for v in text.split("-"))
        return int(np.random.default_rng([seed, index, 7]).integers(low, high + 1))
    return int(text)


def generate_portfolio(out: Path, *, sites: int = 8, seed: int = 18, members: str = "10",
                       campaigns: str | None = None, thin: bool = True) -> list[dict]:
    """Write ``out/portfolio.toml`` and ``sites`` site folders; returns one dict per site."""
    out = Path(out)
    if out.exists() and any(out.iterdir()):
        raise SystemExit(f"{out} exists and is not empty; give a new folder")
    out.mkdir(parents=True, exist_ok=True)
    chosen = []
    for index in range(sites):
        key = slug(site_name(index))
        chosen.append(generate_site(out / key, index, seed=seed,
                                    members=_member_count(members, index, seed),
                                    campaigns=campaigns, thin=thin))
    listing = ", ".join(f'"{c["key"]}"' for c in chosen)
    (out / "portfolio.toml").write_text(
        "# Invented portfolio generated by demo_sites/generate_portfolio.py "
        f"(seed {seed}, {sites} sites).\n"
        f'name = "Invented estate of {sites} car parks"\n'
        f"sites = [{listing}]\n", encoding="utf-8")
    return chosen


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("out", type=Path, help="new folder for the portfolio")
    parser.add_argument("--sites", type=int, default=8)
    parser.add_argument("--members", default="10",
                        help="members per site (>= 10), or a range such as 10-16")
    parser.add_argument("--seed", type=int, default=18)
    parser.add_argument("--campaigns", choices=sorted(CAMPAIGN_CHOICES),
                        help="the same campaigns for every site (default: drawn per site)")
    parser.add_argument("--no-thinning", action="store_true", help="copy campaign files whole")
    args = parser.parse_args()
    for site in generate_portfolio(args.out, sites=args.sites, seed=args.seed,
                                   members=args.members, campaigns=args.campaigns,
                                   thin=not args.no_thinning):
        print(f"{site['key']:24s} built {site['year_built']}  {site['consequence_class']}  "
              f"{site['members']:4d} members  campaigns: {site['campaigns']:9s}  "
              f"rows dropped: {site['row_drop']:.2f}  decisions: {site['decisions']}")


if __name__ == "__main__":
    main()
