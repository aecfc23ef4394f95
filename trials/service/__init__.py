"""Use cases of Kitchen Trials: what the screens and the command line ask for.

Every function takes the open store first (``open_store(url)``) and returns records of
:mod:`trials.model` (each with ``to_dict()``). Input errors raise
:class:`trials.errors.TrialsError` (or a subclass) with a message that quotes the bad
value; nothing is changed then, because every write is one transaction. Every change
is written to the audit log with who made it.

The use cases live in cohesive modules, re-exported here so that screens and the
command line need one import (``from trials import service``):

======================  =================================================================
module                  holds
======================  =================================================================
``trials``              a trial, its samples and attributes, status, decision, overview
``batches``             test batches: settings, measured variables, sign-off, imports
``panel``               the roster: panelist codes, allergens, consent
``serving``             the serving plan, allergen conflicts, balance, tasting links
``tablet``              the ballot behind a link, the panelist's answers and Finish
``tasting``             checking and saving answers, status, progress, audit
``answer_files``        response files in and out, the paper-entry grid
``archive``             whole-trial archives
``results``             analysis and decision from one snapshot, planning, power
``profiles``            descriptive profiles (map, MANOVA, spider chart); rating power
``documents``           ballots, serving sheet, labels, report
``history``             the trials on file, searched; the control across trials
``experiments``         recipe experiments: designed runs as batches of a rating trial
``experiment_results``  an experiment's effects, surfaces, contours and optimum
======================  =================================================================

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
    AnswerImport,
    check_paper_sheet,
    export_answers,
    export_bytes,
    import_answer_file,
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
    set_batch_value,
    sign_off_batch,
    unsigned_served,
)
from trials.service.documents import (
    link_address_problem,
    print_bytes,
    print_document,
    print_result,
    report_html,
    report_pdf,
    write_report,
)
from trials.service.experiment_results import (
    GOALS,
    MAXIMIZE,
    ExperimentAnalysis,
    ResponseAnalysis,
    analyse_experiment,
    contour,
)
from trials.service.experiments import (
    FOOD_CODE_CAUTION,
    KIND_LABELS,
    KINDS,
    TWO_LEVEL,
    create_experiment,
    design_experiment,
    experiment_design_of,
    experiment_of_trial,
    get_experiment,
    list_experiments,
    plan_experiment_tasting,
    record_run_measures,
    responses_of,
    run_sheet,
    run_table,
    sign_off_runs,
    unsigned_runs,
)
from trials.service.history import control_names, control_trend, history
from trials.service.panel import (
    add_panelist,
    import_panelists,
    list_panelists,
    roster_audit,
    update_panelist,
)
from trials.service.profiles import (
    PanelError,
    panel_errors,
    panelist_departures_of,
    profile_attributes,
    rating_panel_size_needed,
    rating_power_curve,
    trial_profile,
)
from trials.service.results import (
    analyse_trial,
    control_comparisons,
    critical_values,
    critical_values_pdf,
    panel_performance_of,
    panel_size_needed,
    panel_size_words,
    power_curve,
    r_index_of,
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
    plan_table,
)
from trials.service.tablet import ballot_for_token, finish_ballot, record_answer, record_comment
from trials.service.tasting import (
    answer_progress,
    answers_frame,
    audit_log,
    audit_table,
    enter_answer,
    list_answers,
)
from trials.service.trials import (
    add_attribute,
    add_sample,
    change_stamp,
    create_trial,
    get_trial,
    list_trials,
    next_step,
    record_decision,
    set_status,
    trial_overview,
    update_trial,
)
from trials.store import Store, open_store
from trials.store.plans import TASTE_PATH

__all__ = [
    "FOOD_CODE_CAUTION", "GOALS", "KINDS", "KIND_LABELS", "MAXIMIZE", "NO_PREFERENCE",
    "TASTE_PATH", "TWO_LEVEL", "responses_of",
    "ExperimentAnalysis", "ResponseAnalysis", "analyse_experiment", "contour",
    "create_experiment", "design_experiment", "experiment_design_of", "experiment_of_trial",
    "get_experiment", "list_experiments", "plan_experiment_tasting", "record_run_measures",
    "run_sheet", "run_table", "sign_off_runs", "unsigned_runs",
    "AnswerImport", "AuditEntry", "BallotAnswer", "BallotSet", "PanelError", "PanelistBallot",
    "Store", "TrialOverview", "TrialSummary",
    "add_attribute", "add_batch", "add_panelist", "add_sample", "allergen_conflicts",
    "analyse_trial", "answer_progress", "control_comparisons", "audit_log", "audit_table",
    "ballot_for_token", "change_stamp",
    "check_paper_sheet", "control_names", "control_trend", "create_trial",
    "critical_values", "critical_values_pdf", "draw_plan", "export_archive",
    "export_bytes", "export_measures_bytes", "export_answers", "get_trial", "history",
    "answers_frame", "enter_answer", "finish_ballot", "import_answer_file", "import_answers",
    "import_archive", "import_batches", "import_panelists", "link_address_problem", "list_answers",
    "list_batches", "list_panelists", "list_trials", "measures_frame", "next_step", "open_store",
    "panel_choice", "panel_errors", "panel_performance_of", "panel_size_needed",
    "panel_size_words", "panelist_departures_of", "panelist_links", "panelist_token",
    "paper_sheet", "plan", "plan_balance", "plan_table", "power_curve", "print_bytes",
    "print_document", "print_result", "profile_attributes", "r_index_of",
    "rating_panel_size_needed", "rating_power_curve", "record_answer", "record_comment",
    "record_decision", "report_html", "report_pdf", "roster_audit", "save_paper_sheet",
    "set_batch_value", "set_status", "sign_off_batch", "trial_decision", "trial_overview",
    "trial_profile", "unsigned_served", "update_panelist", "update_trial", "write_report",
]
