"""The first page of the site report, and one number per quantity across its sections.

On the demo site (invented data), through the main job run once per session
(`demo_job` in tests/conftest.py). References: the site file (its members), the
members section of the same JSON (one source for each number), and the delta-method
band of a sampling estimate, se_beta = CoV pf / phi(beta) (common practice).
"""

import math
import re
from html import escape as html_escape

import pytest
from scipy import stats

from assess.report.summary import beta_interval, probability_text, recommended_action

VERDICT_WORDS = ("meets target", "below target", "undecided", "no result")


def _first_section(html: str) -> str:
    match = re.search(r'<section id="s1-[^"]*">(.*?)</section>', html, re.S)
    assert match, "the report has a first section"
    return match.group(1)


def test_first_page_carries_every_member_with_verdict_word_and_numbers(demo_job):
    run, html_path, _, numbers = demo_job
    html = html_path.read_text()
    first = _first_section(html)
    assert "Findings at a glance" in first
    page = numbers["numbers"]["first_page"]
    members = set(run.site.members)
    assert {r["member"] for r in page["rows"]} == members
    for row in page["rows"]:
        assert row["member"] in first
        assert row["verdict"] in VERDICT_WORDS
        assert row["remaining_life"] is not None
        assert html_escape(row["remaining_life"]["text"], quote=False) in first
        assert row["action"] and row["further_testing"]
        assert row["beta_after_interval"] is not None
        low, high = row["beta_after_interval"]
        assert low <= row["beta_after"] <= high
    # the verdict is a word beside a coloured mark, never colour alone
    tags = re.findall(r'<span class="tag tone-(\w+)"[^>]*>.*?</span>\s*([^<]+)</span>', first)
    assert len(tags) == len(members)
    assert all(word.strip() in VERDICT_WORDS for _, word in tags)
    # rows below target are marked (tinted and with a sign)
    below = sum(r["verdict"] == "below target" for r in page["rows"])
    assert first.count('<tr class="marked">') == below
    # site, date, data used, target with its reference period, cautions
    site = run.site.site
    assert site.name in first and site.assessment_date.isoformat() in first
    assert "campaign" in page["data used"]
    assert "1-year reference period" in first
    assert "Cautions" in first and page["cautions"]
    # first page comes before the detail
    assert html.index("Findings at a glance") < html.index("Reliability of each member now")


def test_life_and_members_give_the_same_beta_at_the_assessment_date(demo_job):
    _, _, _, numbers = demo_job
    members = {(r["member"], r["mode"]): r for r in numbers["numbers"]["members"]}
    curves = numbers["numbers"]["remaining_life"]["curves"]
    tied = 0
    for curve in curves:
        after = members[(curve["member"], curve["mode"])]
        if curve["beta"][0] is None or after["beta_after"] is None \
                or not math.isfinite(after["beta_after"]):
            continue  # no failed sample in the members' estimate: nothing to tie
        assert curve["beta"][0] == after["beta_after"]          # one number, exactly
        assert curve["anchor"]["beta_members_after"] == after["beta_after"]
        tied += 1
    assert tied >= len({c["member"] for c in curves})
    # and the first page shows that same number for the member's governing curve
    page = {r["member"]: r for r in numbers["numbers"]["first_page"]["rows"]}
    for member, row in page.items():
        own = [c for c in curves if c["member"] == member]
        curve = next((c for c in own if c["mode"] == "system"), own[0])
        assert row["beta_after"] == curve["beta"][0]


def test_value_of_information_uses_the_life_curve_of_its_member(demo_job):
    _, _, _, numbers = demo_job
    worth = numbers["numbers"]["value_of_information"]
    assert worth["annual_pf_follows_life_curve"] is True
    own = [c for c in numbers["numbers"]["remaining_life"]["curves"]
           if c["member"] == worth["member"]]
    curve = next((c for c in own if c["mode"] == "system"), own[0])  # governing curve
    horizon = worth["horizon_years"]
    keep = worth["keep_annual_pf_by_year"]
    # mean over the draws of each year's annual pf = the life curve's pf (same array), except
    # that a draw's annual pf is capped at 1 (np.clip in time_dependent_annual_pf): the cap
    # lowers the mean by exactly the mass it removes, which the JSON states year by year
    life_sum = sum(curve["pf"][:horizon])
    lost = worth["keep_annual_pf_cap_loss_by_year"]
    assert min(lost) >= 0.0
    assert sum(keep) + sum(lost) == pytest.approx(life_sum, rel=1e-9)


def test_interval_by_the_delta_method_when_members_give_none():
    row = {"beta_after": 3.0, "pf_after": float(stats.norm.sf(3.0)), "cov_after": 0.1}
    low, high = beta_interval(row)
    se = 0.1 * stats.norm.sf(3.0) / stats.norm.pdf(3.0)
    assert high - 3.0 == pytest.approx(2 * se) and 3.0 - low == pytest.approx(2 * se)
    row["beta_after_interval"] = [2.8, 3.3]  # the members step's own interval wins
    assert beta_interval(row) == (2.8, 3.3)


def test_probabilities_read_the_same_everywhere_and_actions_do_not_contradict():
    assert probability_text(0.125) == "12.5%"
    assert probability_text(0.0) == "0.0%" and probability_text(1.0) == "100.0%"

    class Life:  # a member that falls below the target after 15.4 years
        status, years = "crosses target", 15.4

    class Curve:
        remaining_life = Life()

    text = recommended_action("meets target", Curve(),
                              {"decision": "keep as is", "horizon_years": 20})
    assert "15 years" in text and "re-assess before then" in text
    assert "below target" not in recommended_action("meets target", None)


def _entry(name, beta_after, verdict, concrete_mean):
    import datetime as dt
    import types

    from assess.priors.normal_gamma import NormalGamma

    class Result:
        member, mode = "B1", "system"

        def to_dict(self):
            return {"member": "B1", "mode": "system", "zone": "Z", "beta_after": beta_after,
                    "verdict": verdict}

    # JCSS PMC Part 3.1 prior layout (m', n', s', nu'), values invented for the test
    knowledge = {"Z": {"concrete": NormalGamma.from_jcss(concrete_mean, 3.0, 0.12, 10.0),
                       "steel": NormalGamma.from_jcss(560.0, 3.0, 30.0, 10.0),
                       "cover": NormalGamma.from_jcss(30.0, 3.0, 5.0, 10.0),
                       "area_ratio": NormalGamma.from_jcss(0.95, 3.0, 0.03, 10.0)}}
    return types.SimpleNamespace(campaign=name, date=dt.date(2024, 5, 1),
                                 assessment=types.SimpleNamespace(results=[Result()]),
                                 knowledge=knowledge)


def test_change_since_previous_campaign_names_the_population_that_moved():
    from assess.report.summary import changes_since_previous

    # only the concrete population changes (ln f_c mean 3.65 -> 3.30): it must be named
    history = [_entry("C1", 4.4, "meets target", 3.65), _entry("C2", 3.9, "below target", 3.30)]
    changes, since = changes_since_previous(history, {"B1": "Z"})
    assert since.startswith("C1")
    assert changes["B1"]["delta"] == pytest.approx(-0.5)
    assert changes["B1"]["verdict_before"] == "meets target"
    assert "concrete" in changes["B1"]["moved_by"]
    # an unchanged verdict needs no explanation
    history = [_entry("C1", 4.4, "meets target", 3.65), _entry("C2", 4.5, "meets target", 3.70)]
    changes, _ = changes_since_previous(history, {"B1": "Z"})
    assert changes["B1"]["moved_by"] == ""
    assert changes_since_previous(history[:1], {"B1": "Z"}) == ({}, "")
