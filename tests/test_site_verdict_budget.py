"""The budget of limit-state calls per verdict, settable in the site file's ``[sampling]``
table (``verdict_calls``) as well as by ``--verdict-calls``; the command line wins.

No outside reference is needed: these are checks of reading and precedence (common practice
for settings files: the file sets a default, the command line overrides it).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from assess.cli.options import make_settings
from assess.pipeline import settings_for_site
from assess.portfolio.site_job import job_settings
from assess.site.settings import FULL_VERDICT_CALLS, QUICK_VERDICT_CALLS
from inspection_io.errors import InputError
from inspection_io.site import load_site

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / "site.toml"


def site_with(tmp_path, extra: str):
    folder = tmp_path / "site"
    folder.mkdir(exist_ok=True)
    (folder / "site.toml").write_text(DEMO_SITE.read_text() + "\n" + extra + "\n")
    return folder


def test_the_site_file_sets_the_budget_and_the_command_line_wins(tmp_path):
    site = load_site(site_with(tmp_path, "[sampling]\nverdict_calls = 12345\n"
                                         "[sampling.corrosion]\ndraws = 3000\n"))
    assert site.verdict_calls == 12345
    assert settings_for_site(site).max_calls_per_verdict == 12345
    assert settings_for_site(site, quick=True).max_calls_per_verdict == 12345
    assert job_settings({"quick": True}, site).max_calls_per_verdict == 12345
    assert make_settings(site).max_calls_per_verdict == 12345
    assert make_settings(site, verdict_calls=777).max_calls_per_verdict == 777
    assert make_settings(site, verdict_calls=0).max_calls_per_verdict == 0
    # the fit tables beside the key are still read
    assert settings_for_site(site).fit("corrosion").draws == 3000


def test_without_the_key_the_defaults_hold(tmp_path):
    site = load_site(site_with(tmp_path, ""))
    assert site.verdict_calls is None
    assert settings_for_site(site).max_calls_per_verdict == FULL_VERDICT_CALLS
    assert settings_for_site(site, quick=True).max_calls_per_verdict == QUICK_VERDICT_CALLS


@pytest.mark.parametrize("value", ["-1", "1.5", '"many"', "true", "100000001"])
def test_a_bad_budget_names_file_key_and_what_was_expected(tmp_path, value):
    folder = site_with(tmp_path, f"[sampling]\nverdict_calls = {value}\n")
    with pytest.raises(InputError) as info:
        load_site(folder)
    assert info.value.column == "sampling.verdict_calls"
    assert Path(info.value.file).name == "site.toml"
    assert "whole number" in info.value.message

