"""How the use cases read the store: a composite (archive, report, printed document)
is one snapshot, and the history costs a fixed number of queries whatever the number
of trials (issue 12)."""

from __future__ import annotations

import contextlib

import sqlalchemy as sa

from tests.integration.store_builders import rating_trial, roster, triangle_trial
from trials import service


class _Counter:
    """Counts the store's read transactions and the SQL statements it runs."""

    def __init__(self, store):
        self.store, self.reads, self.statements = store, 0, 0
        self._read = store.read

    @contextlib.contextmanager
    def _counted_read(self):
        self.reads += 1
        with self._read() as s:
            yield s

    def _on_execute(self, *args, **kwargs):
        self.statements += 1

    def __enter__(self):
        self.store.read = self._counted_read
        sa.event.listen(self.store.engine, "before_cursor_execute", self._on_execute)
        return self

    def __exit__(self, *exc):
        sa.event.remove(self.store.engine, "before_cursor_execute", self._on_execute)
        self.store.read = self._read


def _answered_triangle(store, codes) -> int:
    trial = triangle_trial(store, codes)
    for e in service.plan(store, trial):
        if e.position == 1:
            service.enter_answer(store, trial, panelist_code=e.panelist_code, code=e.code,
                                    attribute="choice")
    return trial


def test_a_report_an_archive_and_a_printed_sheet_each_read_one_snapshot(store, tmp_path):
    codes = roster(store, 6)
    trial = _answered_triangle(store, codes)
    for make in (lambda: service.report_html(store, trial),
                 lambda: service.export_archive(store, trial),
                 lambda: service.print_bytes(store, trial, "sheet"),
                 lambda: service.write_report(store, trial, tmp_path / "report.html")):
        with _Counter(store) as count:
            make()
        assert count.reads == 1


def test_the_history_costs_the_same_queries_for_two_trials_and_for_six(store):
    codes = roster(store, 4)
    rating_trial(store, codes)
    triangle_trial(store, codes)
    with _Counter(store) as few:
        assert len(service.history(store)) == 2
        service.control_trend(store, "Glaze A")
    for seed in range(4):
        rating_trial(store, codes, seed=seed)
    with _Counter(store) as many:
        assert len(service.history(store)) == 6
        service.control_trend(store, "Glaze A")
    assert few.statements > 0
    assert many.statements == few.statements


def test_the_panel_choice_suggests_the_safe_consented_panelists(store):
    import datetime as dt

    from trials.model import Sample

    service.add_panelist(store, "N1", consent_on=dt.date(2026, 1, 5))
    service.add_panelist(store, "N2", consent_on=dt.date(2026, 1, 5), allergens="sesame")
    service.add_panelist(store, "N3")  # no consent recorded
    trial = service.create_trial(store, name="Seeded crust", method="triangle",
                                 samples=[Sample("Plain", is_control=True),
                                          Sample("Seeded", allergens=("sesame",))])
    choice = service.panel_choice(store, trial.id)
    assert choice.consented == ("N1", "N2")
    assert choice.conflicted == ("N2",)
    assert choice.planned == ()
    assert choice.suggested == ("N1",)
    service.draw_plan(store, trial.id, panelist_codes=["N1"], seed=1)
    assert service.panel_choice(store, trial.id).planned == ("N1",)
