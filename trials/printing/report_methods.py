"""Report sections of the methods added for issue 17 (signal detection, CATA), kept
apart from :mod:`trials.printing.report`, which calls them; they use its table helpers
(imported when called, as that module imports this one)."""

from __future__ import annotations

from typing import Any

from trials.analysis import TrialAnalysis


def signal_rows(a: TrialAnalysis) -> tuple[list[str], list[list[Any]]]:
    """The response table of an A-not-A or same-different trial: one row per kind of set."""
    sg = a.signal
    assert sg is not None
    head = ["sets served", f"answered {sg.responses[1]!r}", f"answered {sg.responses[0]!r}",
            "sets"]
    return head, [[sg.signal_sets, sg.hits, sg.n_signal - sg.hits, sg.n_signal],
                  [sg.noise_sets, sg.false_alarms, sg.n_noise - sg.false_alarms, sg.n_noise]]


def cata_rows(a: TrialAnalysis) -> tuple[list[str], list[list[Any]]]:
    """Per word: the ticks of each sample, Cochran's Q and its p."""
    from trials.printing.report import _g

    ca = a.cata
    assert ca is not None
    head = ["word", *ca.samples, "Q", "p"]
    tests = {t.word: t for t in ca.tests}
    rows = [[w, *(ca.counts[s][w] for s in ca.samples),
             _g(tests[w].q) if w in tests else "", _g(tests[w].p_value) if w in tests else ""]
            for w in ca.words]
    return head, rows


def cata_results_html(a: TrialAnalysis) -> str:
    """The CATA section of the HTML report: ticks and Q, the map's coordinates, penalty-lift."""
    from trials.printing.report import _g, _table, e

    ca = a.cata
    assert ca is not None
    head, rows = cata_rows(a)
    out = ["<h3>Ticks per word and sample, Cochran's Q</h3>",
           _table(head, rows, numeric=tuple(range(1, len(head))))]
    if ca.correspondence is not None:
        cr = ca.correspondence
        out.append("<h3>Correspondence analysis (principal coordinates)</h3>")
        out.append(_table(["sample or word", "dimension 1", "dimension 2"],
                          [(n, _g(c[0]), _g(c[1]) if len(c) > 1 else "")
                           for n, c in [*zip(cr.samples, cr.sample_coords),
                                        *zip(cr.words, cr.word_coords)]], numeric=(1, 2)))
        out.append(f"<p>Share of the inertia: "
                   f"{e(', '.join(f'{100 * x:.1f} %' for x in cr.shares))}.</p>")
    if ca.lifts:
        out.append(f"<h3>Penalty-lift on {e(ca.liking)}</h3>")
        out.append(_table(["word", "ticked (n)", "mean ticked", "not ticked (n)", "mean not",
                           "lift", "Welch p"],
                          [(x.word, x.n_ticked, _g(x.mean_ticked), x.n_not, _g(x.mean_not),
                            _g(x.lift), _g(x.p_value)) for x in ca.lifts],
                          numeric=(1, 2, 3, 4, 5, 6)))
    if ca.note:
        out.append(f"<p>{e(ca.note)}</p>")
    return "".join(out)


def signal_results_html(a: TrialAnalysis) -> str:
    """The A-not-A / same-different section of the HTML report."""
    from trials.decision import fmt_risk
    from trials.printing.report import _g, _kv, _table, e

    sg = a.signal
    assert sg is not None
    head, rows = signal_rows(a)
    out = ["<h3>Response table</h3>", _table(head, rows, numeric=(1, 2, 3))]
    r = sg.result
    if r is None:
        return "".join(out) + f"<p>{e(sg.note or 'No result.')}</p>"
    dp = r.dprime
    kv = [("Fisher's exact test, one-sided p", _g(r.p_value)),
          ("significant at alpha " + fmt_risk(r.alpha), "yes" if r.significant else "no"),
          ("Pearson chi-square (1 df)", _g(r.test.chi2)), ("chi-square p (two-sided)",
                                                           _g(r.test.chi2_p)),
          ("hit rate H", _g(dp.hit_rate)), ("false-alarm rate F", _g(dp.false_alarm_rate)),
          ("d' (" + dp.model + " model)", _g(dp.dprime)), ("d' standard error", _g(dp.dprime_se)),
          (f"d' {dp.level * 100:g} % interval (Wald)", "-" if dp.dprime_ci is None else
           f"{_g(dp.dprime_ci[0])} to {_g(dp.dprime_ci[1])}"),
          ("criterion", _g(dp.criterion))]
    if r.note or sg.note:
        kv.append(("note", "; ".join(x for x in (r.note, sg.note) if x)))
    return "".join(out) + "<h3>Signal-detection test</h3>" + _kv(kv)
