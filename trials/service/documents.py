"""Use cases of documents: the printed ballots, serving sheet and cup labels, and the
trial's report (HTML) and printable summary (PDF). Each reads the trial in one
snapshot (:func:`trials.service.results.trial_file`) and analyses it once; a rating
trial with three or more intensity attributes also gets its descriptive profile."""

from __future__ import annotations

from pathlib import Path

from trials.errors import TrialsError
from trials.service._input import today
from trials.service.results import analyse_file, trial_file
from trials.service.serving import conflicts_of
from trials.store import Store

DOCUMENTS = ("ballots", "sheet", "labels")


def print_result(store: Store, trial_id: int, kind: str, *, progress=None,
                 base_url: str = ""):
    """A printed document of the trial as a :class:`trials.printing.PrintResult`:
    ``ballots``, ``sheet`` (the serving sheet with the key, kitchen only) or ``labels``.

    ``progress(done, total)`` is called as the work goes on; ``base_url`` (the app's
    address) puts each panelist's tasting link on their ballot as a QR code.
    """
    from trials import printing

    if kind not in DOCUMENTS:
        raise TrialsError(f"unknown document {kind!r}; expected ballots, sheet or labels")
    f = trial_file(store, trial_id)
    if not f.plan:
        raise TrialsError(f"trial {trial_id} has no serving plan yet; draw one first")
    entries = list(f.plan)
    if kind == "ballots":
        return printing.ballots_pdf(f.study, entries, panelists=list(f.roster),
                                    base_url=base_url, tokens=f.links if base_url else None,
                                    today=today(), progress=progress)
    if kind == "sheet":
        return printing.serving_sheet_pdf(
            f.study, entries, batches=list(f.batches),
            conflicts=conflicts_of(f.study.samples, entries, f.roster),
            panelists=list(f.roster), progress=progress)
    return printing.labels_pdf(entries, progress=progress)


def print_bytes(store: Store, trial_id: int, kind: str, *, progress=None,
                base_url: str = "") -> bytes:
    """The PDF bytes of :func:`print_result`, for a download button."""
    return print_result(store, trial_id, kind, progress=progress, base_url=base_url).data


def print_document(store: Store, trial_id: int, kind: str, path: Path, *,
                   base_url: str = "") -> int:
    """Write :func:`print_result`'s PDF to ``path``; returns the number of pages."""
    result = print_result(store, trial_id, kind, base_url=base_url)
    Path(path).write_bytes(result.data)
    return result.pages


def _report(store: Store, trial_id: int, build):
    """One snapshot, one analysis, one decision, and the document ``build`` makes."""
    from trials.decision import decide
    from trials.service.experiments import trial_file_and_experiment
    from trials.service.profiles import profile_of_file

    f, experiment = trial_file_and_experiment(store, trial_id)
    analysis = analyse_file(f)
    decision = decide(analysis, study=f.study)
    extra = {}
    if experiment is not None and build.__name__ == "report_html":
        from trials.service.experiment_results import report_part

        extra["experiment"] = report_part(experiment, f, analysis)
    doc = build(f.study, analysis, plan=list(f.plan), responses=list(f.responses),
                batches=list(f.batches), decision_text=decision,
                profile=profile_of_file(f) if analysis.has_answers else None, **extra)
    return doc, decision


def report_html(store: Store, trial_id: int) -> str:
    """The trial's report as one self-contained HTML document
    (:func:`trials.printing.report.report_html`)."""
    from trials.printing.report import report_html as build

    return _report(store, trial_id, build)[0]


def report_pdf(store: Store, trial_id: int) -> bytes:
    """The trial's printable summary as PDF bytes (:func:`trials.printing.report.report_pdf`)."""
    from trials.printing.report import report_pdf as build

    return _report(store, trial_id, build)[0]


def write_report(store: Store, trial_id: int, path: Path) -> str:
    """Write the trial's report to ``path``: the printable PDF summary when the name ends
    in ``.pdf``, else the HTML report; returns the decision's headline."""
    from trials.printing.report import report_html, report_pdf

    if Path(path).suffix.lower() == ".pdf":
        data, decision = _report(store, trial_id, report_pdf)
        Path(path).write_bytes(data)
    else:
        doc, decision = _report(store, trial_id, report_html)
        Path(path).write_text(doc, encoding="utf-8")
    return decision.text


LOCAL_HOSTS = ("localhost", "127.0.0.1", "::1", "0.0.0.0", "")


def link_address_problem(base_url: str) -> str | None:
    """Why tasting links and QR codes made with ``base_url`` would not open on a
    tablet (an address of this computer only, or none), or None when they can.

    ``base_url`` is what the app uses for links: ``TRIALS_BASE_URL`` when set, else the
    address the leader's browser used."""
    from urllib.parse import urlsplit

    url = (base_url or "").strip()
    host = (urlsplit(url).hostname or "").lower() if url else ""
    if not url:
        return ("the app's address is not known, so the ballots carry no QR code and the "
                "links only a path")
    if host in LOCAL_HOSTS or host.startswith("127.") or host.endswith(".localhost"):
        return (f"the tasting links and QR codes on the ballots would point at {url}, an "
                "address of this computer only, which no tablet reaches")
    return None
