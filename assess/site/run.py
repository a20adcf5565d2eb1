"""The steps of an assessment on one site, each run once, recorded once, isolated from the rest.

A `SiteRun` holds a site, the `RunSettings` and what its steps produced so far.
`run_step` runs one step by name, after the steps it needs (each at most once
per run), captures the warnings it raises, and records in the ledger the step's
result rows and a ``"step"`` row with its status. The single commands (``assess
update``, ``members``, ``life``, ``worth``, ``history``) and the main job
(`assess.pipeline.run_site`) call the same `run_step`, so they write the same
ledger rows for the same inputs.

A step that fails (a fit that does not pass its convergence gate, too little
data, a bad decision file) is recorded as failed with its reason and what to
do; a later step that needs it fails with `StepUnavailable`, which names it;
steps that do not need it are unaffected.
"""

from __future__ import annotations

import dataclasses
import time
import warnings
from pathlib import Path
from typing import Any, Callable

from assess.errors import AnalysisError, InputError
from assess.site.record import LedgerRow, record_rows
from assess.site.settings import RunSettings

DONE, FAILED, SKIPPED = "done", "failed", "skipped"

STEP_TITLES = {
    "materials": "Update of the zone materials with the site's tests (MCMC)",
    "members": "Reliability of every member, before and after the tests",
    "corrosion": "Corrosion initiation and rate from the site's evidence (MCMC)",
    "life": "Remaining-life curves",
    "worth": "Value of information of the candidate test programmes",
    "history": "Re-assessment campaign by campaign",
}
"""Every step by name, in the order of the main job, with its title in plain words."""


class StepUnavailable(AnalysisError):
    """A step cannot run because a step it needs failed (the message names it)."""


@dataclasses.dataclass
class StepRecord:
    """How one step of a run went.

    Attributes
    ----------
    name, title : str
    status : str
        ``"done"``, ``"failed"`` or ``"skipped"``.
    reason : str
        Why it failed or was skipped (empty when done).
    fix : str
        What the user can do about it (empty when done or not known).
    input_problem : bool
        True when the failure came from bad input (exit code 2 rather than 1).
    seconds : float
        Wall-clock time of the step [s].
    warnings : list of str
        Distinct warnings the step raised.
    """

    name: str
    title: str
    status: str
    reason: str = ""
    fix: str = ""
    input_problem: bool = False
    seconds: float = 0.0
    warnings: list = dataclasses.field(default_factory=list)

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


@dataclasses.dataclass
class SiteCorrosion:
    """Corrosion inputs of every zone and the fit behind them (None without evidence)."""

    fit: Any
    inputs: dict

    def ledger_rows(self) -> list[LedgerRow]:
        if self.fit is None:
            return []
        return [
            LedgerRow(
                "corrosion",
                {
                    "zones": list(self.fit.zones),
                    "gate": self.fit.gate.to_dict(),
                    "inputs": {z: c.to_dict() for z, c in self.inputs.items()},
                },
                seed=int(self.fit.seed),
            )
        ]


@dataclasses.dataclass
class SiteHistory:
    """The site re-assessed as of each campaign (`assess.site.history.CampaignAssessment`)."""

    entries: list

    def ledger_rows(self) -> list[LedgerRow]:
        from assess.site.history import history_ledger_rows

        return history_ledger_rows(self.entries)


class SiteRun:
    """One run over a site: the site, the settings and the steps done so far.

    Parameters
    ----------
    site : inspection_io.site.Site
    settings : RunSettings, optional
    members : sequence of str, optional
        Only these members in the members and life steps.
    worth_member : str, optional
        Member of the value-of-information step (default: the decision file's).
    decisions_file : Path, optional
        Decision set-up file (default ``decisions.toml`` in the site folder).
    record : bool
        Write the steps' rows to the ledger.
    say : callable, optional
        Called with the title of each step as it starts.
    """

    def __init__(
        self,
        site,
        settings: RunSettings | None = None,
        *,
        members=None,
        worth_member: str | None = None,
        decisions_file: Path | None = None,
        record: bool = True,
        say: Callable[[str], None] | None = None,
    ):
        self.site = site
        self.settings = settings or RunSettings()
        self.members = list(members) if members else None
        self.worth_member = worth_member
        self.decisions_file = Path(decisions_file) if decisions_file else None
        self.record = record
        self.say = say or (lambda _text: None)
        self.results: dict[str, Any] = {}
        self.records: dict[str, StepRecord] = {}
        self.warnings: list[str] = []
        self.data_summaries: dict = {}
        self.flagged: list = []
        self.cutoff_prefetch: Any = None
        """`assess.site.history_prefetch.CutoffPrefetch` of the history's cut-off fits, if
        the main job started one."""

    def step(self, name: str) -> Any:
        """The result of step ``name`` (run now if not yet run)."""
        return run_step(self, name)

    def result(self, name: str) -> Any:
        """The result of a step that is done, else None (never runs it)."""
        record = self.records.get(name)
        return self.results.get(name) if record is not None and record.status == DONE else None

    @property
    def failed(self) -> list[StepRecord]:
        return [r for r in self.records.values() if r.status == FAILED]

    def add_warning(self, text: str) -> None:
        if text not in self.warnings:
            self.warnings.append(text)


def _decisions_path(run: SiteRun) -> Path:
    from assess.worth.decision_file import DEFAULT_FILE_NAME

    return run.decisions_file or run.site.folder / DEFAULT_FILE_NAME


# -- the steps -------------------------------------------------------------------------------
def _materials(run: SiteRun):
    from assess.site.materials import update_site

    return update_site(run.site, settings=run.settings)


def _members(run: SiteRun):
    from assess.site.before_after import assess_members
    from assess.site.design_check import design_check_warnings

    update = _with_present_corrosion(run, run.step("materials"))
    for message in design_check_warnings(run.site):
        warnings.warn(message, UserWarning, stacklevel=2)
    assessment = assess_members(
        run.site,
        update,
        method=run.settings.method,
        seed=run.settings.seed,
        options=run.settings.reliability_options,
        members=run.members,
        max_calls=run.settings.max_calls_per_verdict,
    )
    from assess.site.drivers import site_drivers

    try:  # which uncertainty drives the risk: a missing table does not stop the members step
        assessment.drivers = site_drivers(run.site, update, assessment, seed=run.settings.seed)
    except AnalysisError as exc:
        run.add_warning(f"which uncertainty drives the risk: not computed ({exc})")
    # the posterior family at each member's own tail level (assess.site.member_family)
    from assess.site.member_family import member_family_checks, member_family_warning

    text = member_family_warning(member_family_checks(run.site, update, assessment.results))
    if text:
        warnings.warn(text, UserWarning, stacklevel=2)
    return assessment


def _with_present_corrosion(run: SiteRun, update):
    """``update`` with today's section loss per face (`assess.site.corrosion_state`).

    The corrosion step's inputs when the run includes the life step (which needs
    the corrosion fit anyway), else the corrosion priors (no MCMC); a failed
    corrosion fit does not stop the members table.
    """
    from assess.site.corrosion import zone_corrosion_inputs
    from assess.site.corrosion_state import present_state

    inputs = None
    if run.settings.life:
        try:
            inputs = run.step("corrosion").inputs
        except (StepUnavailable, AnalysisError):
            run.add_warning(
                "today's section loss per face uses the corrosion priors: the corrosion fit "
                "did not run"
            )
    if inputs is None:
        inputs = zone_corrosion_inputs(run.site, seed=run.settings.seed)
    present, _ = present_state(
        run.site,
        update,
        inputs,
        pitting=run.settings.pitting,
        seed=run.settings.seed,
        until_date=update.until_date,
    )
    return present


def _corrosion(run: SiteRun):
    from assess.site.corrosion import update_corrosion, zone_corrosion_inputs

    fit = update_corrosion(run.site, settings=run.settings)
    return SiteCorrosion(fit, zone_corrosion_inputs(run.site, fit, seed=run.settings.seed))


def _life(run: SiteRun):
    from assess.site.life import compute_site_life, members_from_ledger

    update = run.step("materials")
    corrosion = run.step("corrosion")
    assessment = run.result("members")
    if assessment is None:  # e.g. `assess life` after `assess members`: the same numbers
        assessment = members_from_ledger(run.site, update, run.settings.seed)
    return compute_site_life(
        run.site,
        update,
        corrosion.inputs,
        settings=run.settings,
        members=run.members,
        assessment=assessment,
    )


def _worth(run: SiteRun):
    from assess.site.worth import compute_site_worth
    from assess.worth.decision_file import read_decision_setup

    path = _decisions_path(run)
    setup = read_decision_setup(path)
    update = run.step("materials")
    return compute_site_worth(
        run.site,
        update,
        setup,
        member=run.worth_member,
        settings=run.settings,
        decision_file=path,
        life=run.result("life"),
    )


def _history(run: SiteRun):
    from assess.site.history import reassess_history

    if run.cutoff_prefetch is not None:
        run.say("Waiting for the campaign cut-off fits sampled in the background")
        run.cutoff_prefetch.wait()
    members = run.result("members")
    if members is not None and run.members is not None:
        members = None  # a partial members table cannot stand for the whole site
    return SiteHistory(
        reassess_history(
            run.site, settings=run.settings, method=run.settings.method, current=members
        )
    )


_STEPS: dict[str, Callable[[SiteRun], Any]] = {
    "materials": _materials,
    "members": _members,
    "corrosion": _corrosion,
    "life": _life,
    "worth": _worth,
    "history": _history,
}


def skip_reason(run: SiteRun, name: str) -> str:
    """Why step ``name`` has nothing to do on this site ("" when it has)."""
    from assess.site.paths import has_ledger

    if name == "worth" and not _decisions_path(run).is_file():
        return (
            f"no decision set-up file ({_decisions_path(run).name}) in the site folder; "
            "write one to value further testing (see docs/decision-file.md)"
        )
    if name == "history" and not has_ledger(run.site.folder):
        return "no inspection campaign has been imported yet"
    return ""


def run_step(run: SiteRun, name: str) -> Any:
    """Run step ``name`` once (after what it needs), record it, and return its result.

    Raises
    ------
    StepUnavailable
        A step it needs failed, or it has nothing to do (the message says why).
    AnalysisError, InputError
        The step itself failed; it is recorded as failed before the error is raised.
    """
    if name not in _STEPS:
        raise InputError(f"unknown step {name!r}; the steps are {', '.join(_STEPS)}")
    record = run.records.get(name)
    if record is not None:
        if record.status == DONE:
            return run.results[name]
        raise StepUnavailable(
            f"the step '{record.title}' did not run: {record.reason}", fix=record.fix or None
        )
    reason = skip_reason(run, name)
    if reason:
        run.records[name] = StepRecord(name, STEP_TITLES[name], SKIPPED, reason=reason)
        _record_status(run, run.records[name])
        raise StepUnavailable(f"the step '{STEP_TITLES[name]}' did not run: {reason}")
    run.say(STEP_TITLES[name])
    started = time.perf_counter()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("default", UserWarning)
        try:
            value = _STEPS[name](run)
        except (AnalysisError, InputError) as exc:
            record = _failure(run, name, exc, time.perf_counter() - started)
            _keep_warnings(run, record, caught)
            _record_status(run, record)
            raise
    record = StepRecord(name, STEP_TITLES[name], DONE, seconds=time.perf_counter() - started)
    _keep_warnings(run, record, caught)
    run.results[name] = value
    run.records[name] = record
    if run.record:
        rows = value.ledger_rows() if hasattr(value, "ledger_rows") else []
        record_rows(run.site, rows, step=name, settings=run.settings.to_dict())
    _record_status(run, record)
    return value


def _failure(run: SiteRun, name: str, exc: Exception, seconds: float) -> StepRecord:
    reason = str(exc)
    fix = getattr(exc, "fix", None) or ""
    if isinstance(exc, InputError) and not fix:
        fix = "Correct the file, row and column named and run again."
    record = StepRecord(
        name,
        STEP_TITLES[name],
        FAILED,
        reason=reason,
        fix=fix,
        input_problem=isinstance(exc, InputError),
        seconds=seconds,
    )
    run.records[name] = record
    return record


def _from_this_project(filename: str) -> bool:
    """True when a warning was raised (or attributed) in `assess` or `inspection_io`."""
    parts = Path(str(filename)).parts
    return "assess" in parts or "inspection_io" in parts


def _keep_warnings(run: SiteRun, record: StepRecord, caught) -> None:
    """Keep the distinct warnings of a step and show them the usual way, once each."""
    for item in caught:
        if not issubclass(item.category, UserWarning):
            continue  # library chatter (deprecations, numerical notices) is not for the report
        if not _from_this_project(item.filename):
            continue  # e.g. PyTensor's BLAS notice: about the machine, not the structure
        text = str(item.message)
        if text not in record.warnings:
            record.warnings.append(text)
        if text not in run.warnings:
            run.add_warning(text)
            warnings.showwarning(item.message, item.category, item.filename, item.lineno)


def _record_status(run: SiteRun, record: StepRecord) -> None:
    if not run.record:
        return
    record_rows(
        run.site,
        [LedgerRow("step", record.to_dict(), mode=record.name, seed=run.settings.seed)],
        step=record.name,
        settings=run.settings.to_dict(),
    )


__all__ = [
    "DONE",
    "FAILED",
    "SKIPPED",
    "STEP_TITLES",
    "SiteCorrosion",
    "SiteHistory",
    "SiteRun",
    "StepRecord",
    "StepUnavailable",
    "run_step",
    "skip_reason",
]
