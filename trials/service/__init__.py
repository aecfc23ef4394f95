"""Use cases of Kitchen Trials: what the screens and the command line ask for.

Every function takes the open store first (``open_store(url)``) and returns records of
:mod:`trials.model` (each with ``to_dict()``). Input errors raise
:class:`trials.errors.TrialsError` (or a subclass) with a message that quotes the bad
value; nothing is changed then, because every write is one transaction. Every change
is written to the audit log with who made it.

The use cases live in cohesive modules, re-exported here so that screens and the
command line need one import (``from trials import service``):

=================  =================================================================
module             holds
=================  =================================================================
``trials``         a trial, its samples and attributes, status, decision, overview
``batches``        test batches: settings, measured variables, sign-off, imports
``panel``          the roster: panelist codes, allergens, consent
``serving``        the serving plan, allergen conflicts, balance, tasting links
``tasting``        the ballot behind a link, recording answers, progress, audit
``answer_files``   response files in and out, the paper-entry grid
``archive``        whole-trial archives
``results``        analysis and decision from one snapshot, planning, power
``documents``      ballots, serving sheet, labels, report
``history``        the trials on file, searched; the control across trials
=================  =================================================================

Only :mod:`trials.store` touches the database; the answer checks are pure
(:mod:`trials.answers`).
"""

from trials.answers import NO_PREFERENCE
from trials.model import (
    AuditEntry,
    BallotAnswer,
    BallotSet,
    PanelistBallot,
    TrialOverview,
    TrialSummary,
)
from trials.service.answer_files import (
    check_paper_sheet,
    export_answers,
    export_bytes,
    import_answers,
    paper_sheet,
    save_paper_sheet,
)
from trials.service.archive import export_archive, import_archive
from trials.service.batches import (
    add_batch,
    export_measures_bytes,
    import_batches,
    list_batches,
    measures_frame,
    sign_off_batch,
)
from trials.service.documents import (
    print_bytes,
    print_document,
    print_result,
    report_html,
    report_pdf,
    write_report,
)
from trials.service.history import control_names, control_trend, history
from trials.service.panel import add_panelist, import_panelists, list_panelists
from trials.service.results import (
    analyse_trial,
    critical_values,
    critical_values_pdf,
    panel_performance_of,
    panel_size_needed,
    power_curve,
    trial_decision,
)
from trials.service.serving import (
    allergen_conflicts,
    draw_plan,
    panel_choice,
    panelist_links,
    panelist_token,
    plan,
    plan_balance,
)
from trials.service.tasting import (
    answer_progress,
    answers_frame,
    audit_log,
    ballot_for_token,
    enter_answer,
    finish_ballot,
    list_answers,
    record_answer,
    record_comment,
)
from trials.service.trials import (
    add_attribute,
    add_sample,
    change_stamp,
    create_trial,
    get_trial,
    list_trials,
    record_decision,
    set_status,
    trial_overview,
    update_trial,
)
from trials.store import Store, open_store
from trials.store.plans import TASTE_PATH

__all__ = [
    "NO_PREFERENCE", "TASTE_PATH",
    "AuditEntry", "BallotAnswer", "BallotSet", "PanelistBallot", "Store", "TrialOverview",
    "TrialSummary",
    "add_attribute", "add_batch", "add_panelist", "add_sample", "allergen_conflicts",
    "analyse_trial", "answer_progress", "audit_log", "ballot_for_token", "change_stamp",
    "check_paper_sheet", "control_names", "control_trend", "create_trial",
    "critical_values", "critical_values_pdf", "draw_plan", "export_archive",
    "export_bytes", "export_measures_bytes", "export_answers", "get_trial", "history",
    "import_archive", "import_batches", "import_panelists", "import_answers",
    "list_batches", "list_panelists", "list_trials", "measures_frame", "open_store",
    "paper_sheet", "panel_choice", "panel_performance_of", "panelist_links", "panelist_token",
    "plan", "plan_balance", "panel_size_needed", "power_curve", "print_bytes", "print_document",
    "print_result", "record_answer", "record_comment", "finish_ballot", "record_decision",
    "enter_answer", "report_html", "report_pdf", "list_answers", "answers_frame",
    "save_paper_sheet", "set_status",
    "sign_off_batch", "trial_decision", "trial_overview", "update_trial", "write_report",
]
