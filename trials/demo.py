"""The invented demo scenario: a fictional test kitchen and five fictional trials.

Everything here is made up for demonstration: "Harbour Lane Test Kitchen", its
panelists (codes P01..P30, no people behind them), its recipes, batches, measurements
and answers. The answers are drawn from a seeded random model, so the demo is the same
every time:

1. *Brioche bun: usual proof vs short proof* -- a triangle test, 27 panelists, 16
   correct answers (the odd cup chosen), a clear difference.
2. *Fried chicken: four coatings* -- a rating trial, 12 panelists, Williams serving
   orders, three attributes: overall liking (9-point hedonic), crispness and saltiness
   (1..9 intensity). Scores are panelist effect + sample effect + noise, rounded and
   kept on the scale: the coatings differ in crispness; they share one seasoning, so
   saltiness has no sample effect at all. Batches carry fryer settings and measured
   yield, core temperature and oil uptake.
3. *Chilled tomato soup: roasted vs fresh tomatoes* -- a paired preference, 24
   panelists, 15 to 9 (no clear preference either way).
4. *Fried chicken: house dredge vs panko crumb* -- an earlier rating trial with the
   coatings' control, for the history screen.
5. *Sandwich loaf: four flour blends* -- a descriptive profile by a trained panel: 4
   loaves x 10 intensity attributes (0..10) x 12 panelists x 2 sessions. Two latent
   directions separate the loaves (wholegrain/rye against white; sour, chewy and crisp
   sourdough); saltiness has no sample effect (one salt level). Panelist P05 uses a
   narrow range of the scale and P09 reverses sourness, for the panel performance view.
6. *Bread roll: proof time x salt x oven temperature* -- a recipe experiment, a
   face-centred central composite design with 3 centre points (17 runs), each run a
   signed-off batch; 16 panelists taste 6 runs each (incomplete blocks). Liking follows
   an invented second-order surface with its peak inside the region; each run's yield
   (%) and core temperature (°C) are recorded.
7. *Lemon curd: three sugar levels* -- a ranking by sweetness with its ballots open:
   the plan is drawn and each panelist has a tasting link, one panelist has answered.
   A newcomer opens a link from the Serving plan screen to try the tablet screen.

``seed(store)`` adds what is missing and returns the demo trials' ids; running it again
adds nothing. ``python -m trials.demo FOLDER`` writes the demo's CSV files (see
sample_data/README.md).
"""

from __future__ import annotations

import datetime as dt
import io
import sys
from pathlib import Path

import numpy as np
import pandas as pd

from trials import methods, service
from trials.model import Attribute, AttributeKind, Sample, TrialSummary

KITCHEN = "Harbour Lane Test Kitchen"
BY = "demo (Harbour Lane Test Kitchen)"

BRIOCHE = "Brioche bun: usual proof vs short proof"
COATINGS = "Fried chicken: four coatings"
SOUP = "Chilled tomato soup: roasted vs fresh tomatoes"
CRUMB = "Fried chicken: house dredge vs panko crumb"
LOAF = "Sandwich loaf: four flour blends"
ROLLS = "Bread roll: proof time x salt x oven temperature"
CURD = "Lemon curd: three sugar levels"
NAMES = (BRIOCHE, COATINGS, SOUP, CRUMB, LOAF, ROLLS, CURD)
ROLL_FACTORS = (
    {"name": "proof time", "unit": "min", "low": 40, "high": 60, "safe_low": 30,
     "safe_high": 90},
    {"name": "salt", "unit": "%", "low": 1.4, "high": 2.0, "safe_low": 1.0, "safe_high": 2.4},
    {"name": "oven temperature", "unit": "°C", "low": 200, "high": 230, "safe_low": 190,
     "safe_high": 240},
)

HEDONIC_9 = (
    "Dislike extremely", "Dislike very much", "Dislike moderately", "Dislike slightly",
    "Neither like nor dislike", "Like slightly", "Like moderately", "Like very much",
    "Like extremely",
)  # the 9-point hedonic scale's labels (Peryam and Pilgrim 1957)

# Panelist code -> declared allergens (invented).
ALLERGIES = {"P05": ("sesame",), "P12": ("peanut",), "P21": ("shellfish",),
             "P28": ("egg",), "P29": ("milk",)}
PANELISTS = tuple(f"P{i:02d}" for i in range(1, 31))

TRIANGLE_N, TRIANGLE_CORRECT = 27, 16
SOUP_N, SOUP_ROASTED = 24, 15

COATING_SAMPLES = (
    Sample("Plain flour dredge", is_control=True, allergens=("gluten",),
           description="House standard: seasoned wheat flour, single dredge."),
    Sample("Flour and cornstarch dredge", allergens=("gluten",),
           description="Three parts wheat flour to one part cornstarch."),
    Sample("Rice flour dredge", allergens=(),
           description="Rice flour and cornstarch; no wheat."),
    Sample("Buttermilk double dredge", allergens=("gluten", "milk"),
           description="Flour, buttermilk dip, flour again."),
)
# Sample effects on the 1..9 scales (invented): crispness differs, saltiness does not.
EFFECTS = {
    "overall liking": (0.0, 0.6, 0.9, 0.4),
    "crispness": (0.0, 1.2, 2.2, 1.6),
    "saltiness": (0.0, 0.0, 0.0, 0.0),
}
BASE = {"overall liking": 5.8, "crispness": 4.6, "saltiness": 5.0}
COATING_BATCHES = (
    # sample index, fryer °C, minutes, yield %, core °C, oil uptake %
    (0, 175, 12.0, 74.1, 78.5, 9.8),
    (1, 175, 12.0, 73.2, 79.0, 10.6),
    (2, 175, 11.5, 75.0, 77.8, 8.4),
    (3, 170, 13.0, 71.6, 80.2, 13.9),
)


def _exists(store, name: str) -> int | None:
    for s in service.list_trials(store):
        if s.name == name:
            return s.id
    return None


def _roster(store) -> None:
    have = {p.code for p in service.list_panelists(store)}
    for i, code in enumerate(PANELISTS):
        if code not in have:
            service.add_panelist(store, code, allergens=ALLERGIES.get(code, ()),
                                 consent_on=dt.date(2026, 3, 2) + dt.timedelta(days=i % 5),
                                 by=BY)


def _eligible(samples: tuple[Sample, ...], n: int) -> list[str]:
    """The first ``n`` panelists who declared none of the samples' allergens."""
    held = {a for s in samples for a in s.allergens}
    ok = [c for c in PANELISTS if not held & set(ALLERGIES.get(c, ()))]
    return ok[:n]


def _import(store, trial_id: int, rows: list[dict], when: dt.datetime) -> None:
    for i, r in enumerate(rows):
        r.setdefault("comment", "")
        r["entered_at"] = (when + dt.timedelta(seconds=20 * i)).isoformat()
        r.setdefault("mode", "tablet")
        r["entered_by"] = r["panelist"] if r["mode"] == "tablet" else "panel leader"
    buf = io.StringIO()
    pd.DataFrame(rows).to_csv(buf, index=False)
    service.import_answers(store, trial_id, buf.getvalue().encode("utf-8"),
                             entered_by=BY, name="demo.csv")


def _brioche(store) -> int:
    samples = (
        Sample("Usual proof (90 min)", is_control=True, allergens=("gluten", "egg", "milk"),
               description="House brioche bun, final proof 90 min at 27 °C."),
        Sample("Short proof (60 min)", allergens=("gluten", "egg", "milk"),
               description="Same dough, final proof cut to 60 min at 27 °C."),
    )
    study = service.create_trial(
        store, name=BRIOCHE, method=methods.TRIANGLE, product="brioche bun",
        objective="Can panelists tell a bun proofed 60 min from the usual 90 min? "
                  "A shorter proof would free an oven slot each morning.",
        alpha=0.05, beta=0.20, pd=0.30, samples=samples, created_on=dt.date(2026, 3, 9), by=BY,
    )
    for sample, proof, volume in ((samples[0], 90, 5.4), (samples[1], 60, 4.7)):
        service.add_batch(
            store, study.id, sample.name, "B1", prepared_on=dt.date(2026, 3, 10),
            prepared_by="Pastry section",
            settings=[("final proof time", proof, "min"), ("proof temperature", 27, "°C"),
                      ("oven temperature", 180, "°C"), ("bake time", 14, "min")],
            measures=[("specific volume", volume, "mL/g"), ("core temperature", 96.5, "°C"),
                      ("bun weight", 62.0, "g")],
            by=BY,
        )
        service.sign_off_batch(store, study.id, sample.name, "B1", by="Sous chef (food safety)",
                               on=dt.date(2026, 3, 10))
    codes = _eligible(samples, TRIANGLE_N)
    entries = service.draw_plan(store, study.id, panelist_codes=codes, session="1", seed=409,
                                by=BY)
    rng = np.random.default_rng(4120)
    correct = set(rng.choice(len(codes), size=TRIANGLE_CORRECT, replace=False).tolist())
    rows = []
    for i, code in enumerate(codes):
        cups = sorted((e for e in entries if e.panelist_code == code), key=lambda e: e.position)
        odd = next(c for c in cups if sum(x.sample_name == c.sample_name for x in cups) == 1)
        others = [c for c in cups if c is not odd]
        pick = odd if i in correct else others[int(rng.integers(2))]
        rows.append({"session": "1", "panelist": code, "code": pick.code,
                     "attribute": "choice", "value": ""})
    _import(store, study.id, rows, dt.datetime(2026, 3, 10, 10, 30))
    service.record_decision(
        store, study.id,
        "Keep the usual 90 min proof.",
        "The panel told the short proof apart (16 of 27 chose the odd bun; exact one-sided "
        "binomial test against 1/3). The shorter proof changes the bun.",
        by="Head of development",
    )
    return study.id


def _scores(entries, codes, attributes, samples, effects, base, rng, *, paper=()):
    """Invented scores: a base level, the sample's effect, a panelist's own offset per
    attribute and noise, rounded onto the scale; one response row per cup and attribute."""
    index = {s.name: i for i, s in enumerate(samples)}
    panel = {c: rng.normal(0, 0.7, size=len(attributes)) for c in codes}
    rows = []
    for e in sorted(entries, key=lambda e: (e.panelist_code, e.position)):
        for j, attr in enumerate(attributes):
            mu = base[attr.name] + effects[attr.name][index[e.sample_name]]
            score = mu + panel[e.panelist_code][j] + rng.normal(0, 0.8)
            score = int(np.clip(np.rint(score), attr.low, attr.high))
            rows.append({"session": "1", "panelist": e.panelist_code, "code": e.code,
                         "attribute": attr.name, "value": str(score),
                         "mode": "paper" if e.panelist_code in paper else "tablet"})
    return rows


def _coatings(store) -> int:
    attributes = (
        Attribute("overall liking", AttributeKind.HEDONIC, 1, 9, HEDONIC_9),
        Attribute("crispness", AttributeKind.INTENSITY, 1, 9, ("not crisp", "very crisp")),
        Attribute("saltiness", AttributeKind.INTENSITY, 1, 9, ("not salty", "very salty")),
    )
    study = service.create_trial(
        store, name=COATINGS, method=methods.RATING, product="fried chicken thigh",
        objective="Which dredge gives the crispest coating without losing liking? All four "
                  "share one seasoning blend.",
        alpha=0.05, delta=1.0, samples=COATING_SAMPLES, attributes=attributes,
        created_on=dt.date(2026, 4, 14), by=BY,
    )
    for k, fryer, minutes, yld, core, oil in COATING_BATCHES:
        name = COATING_SAMPLES[k].name
        service.add_batch(
            store, study.id, name, "F1", prepared_on=dt.date(2026, 4, 16),
            prepared_by="Hot line",
            settings=[("fryer temperature", fryer, "°C"), ("fry time", minutes, "min"),
                      ("thigh weight (raw)", 140, "g")],
            measures=[("yield", yld, "%"), ("core temperature", core, "°C"),
                      ("oil uptake", oil, "%")],
            notes="Fried in one fresh oil change; cooled 3 min before serving.",
            by=BY,
        )
        service.sign_off_batch(store, study.id, name, "F1", by="Sous chef (food safety)",
                               on=dt.date(2026, 4, 16))
    codes = _eligible(COATING_SAMPLES, 12)
    entries = service.draw_plan(store, study.id, panelist_codes=codes, session="1", seed=1949,
                                by=BY)
    rows = _scores(entries, codes, attributes, COATING_SAMPLES, EFFECTS, BASE,
                   np.random.default_rng(8587), paper=("P03", "P08"))
    _import(store, study.id, rows, dt.datetime(2026, 4, 16, 12, 0))
    return study.id  # every answer is in: the import moved the status on to analysed


def _soup(store) -> int:
    samples = (
        Sample("Fresh tomatoes", is_control=True, description="Current recipe."),
        Sample("Roasted tomatoes", description="Tomatoes roasted 25 min at 200 °C first."),
    )
    study = service.create_trial(
        store, name=SOUP, method=methods.PAIRED_PREFERENCE, product="chilled tomato soup",
        objective="Do guests prefer the soup made with roasted tomatoes?",
        alpha=0.05, samples=samples, created_on=dt.date(2026, 5, 4), by=BY,
    )
    for sample, roast in ((samples[0], 0), (samples[1], 25)):
        service.add_batch(
            store, study.id, sample.name, "S1", prepared_on=dt.date(2026, 5, 5),
            prepared_by="Cold section",
            settings=[("roasting time", roast, "min"), ("chill", 4, "°C")],
            measures=[("serving temperature", 5.0, "°C"), ("salt", 0.9, "%")],
            by=BY,
        )
        service.sign_off_batch(store, study.id, sample.name, "S1", by="Sous chef (food safety)",
                               on=dt.date(2026, 5, 5))
    codes = _eligible(samples, SOUP_N)
    entries = service.draw_plan(store, study.id, panelist_codes=codes, session="1", seed=5495,
                                by=BY)
    rng = np.random.default_rng(2263)
    roasted = set(rng.choice(len(codes), size=SOUP_ROASTED, replace=False).tolist())
    rows = []
    for i, code in enumerate(codes):
        cups = [e for e in entries if e.panelist_code == code]
        want = "Roasted tomatoes" if i in roasted else "Fresh tomatoes"
        pick = next(c for c in cups if c.sample_name == want)
        rows.append({"session": "1", "panelist": code, "code": pick.code,
                     "attribute": "choice", "value": ""})
    _import(store, study.id, rows, dt.datetime(2026, 5, 5, 11, 0))
    return study.id  # every answer is in: the import moved the status on to analysed


def _crumb(store) -> int:
    """An earlier trial with the same control as the coatings trial, so that the
    history screen can follow the control across trials."""
    samples = (COATING_SAMPLES[0],
               Sample("Panko crumb", allergens=("gluten", "egg"),
                      description="Flour, egg wash, panko crumb."))
    attributes = (
        Attribute("overall liking", AttributeKind.HEDONIC, 1, 9, HEDONIC_9),
        Attribute("crispness", AttributeKind.INTENSITY, 1, 9, ("not crisp", "very crisp")),
    )
    study = service.create_trial(
        store, name=CRUMB, method=methods.RATING, product="fried chicken thigh",
        objective="Is a panko crumb worth its extra step against the house dredge?",
        alpha=0.05, delta=1.0, samples=samples, attributes=attributes,
        created_on=dt.date(2025, 11, 18), by=BY,
    )
    for name, minutes, oil in ((samples[0].name, 12.0, 9.5), (samples[1].name, 12.5, 12.1)):
        service.add_batch(
            store, study.id, name, "K1", prepared_on=dt.date(2025, 11, 19),
            prepared_by="Hot line",
            settings=[("fryer temperature", 175, "°C"), ("fry time", minutes, "min")],
            measures=[("core temperature", 78.0, "°C"), ("oil uptake", oil, "%")],
            by=BY,
        )
        service.sign_off_batch(store, study.id, name, "K1", by="Sous chef (food safety)",
                               on=dt.date(2025, 11, 19))
    codes = _eligible(samples, 12)
    entries = service.draw_plan(store, study.id, panelist_codes=codes, session="1", seed=1118,
                                by=BY)
    rows = _scores(entries, codes, attributes, samples,
                   {"overall liking": (0.0, 0.3), "crispness": (0.0, 1.4)},
                   {"overall liking": 5.6, "crispness": 4.4}, np.random.default_rng(1118))
    _import(store, study.id, rows, dt.datetime(2025, 11, 19, 12, 0))
    service.record_decision(
        store, study.id, "Keep the plain flour dredge.",
        "The crumb was crisper but not liked more; the extra step is not worth it.",
        by="Head of development",
    )
    return study.id


LOAF_SAMPLES = (
    Sample("White tin loaf", is_control=True, allergens=("gluten",),
           description="House sandwich loaf: strong white flour, straight dough."),
    Sample("Half wholemeal loaf", allergens=("gluten",),
           description="Half the white flour replaced by stoneground wholemeal."),
    Sample("Light rye loaf", allergens=("gluten",),
           description="A quarter light rye flour, a little malt."),
    Sample("Sourdough-starter loaf", allergens=("gluten",),
           description="White flour leavened with the kitchen's own starter, long proof."),
)
# Invented true profiles on 0..10 scales: one row per loaf, one column per attribute.
LOAF_ATTRIBUTES = ("crust colour", "crust crispness", "crumb softness", "crumb moistness",
                   "chewiness", "yeasty aroma", "sourness", "sweetness", "saltiness",
                   "wholegrain flavour")
LOAF_PROFILES = (
    (4.0, 3.5, 7.5, 6.0, 3.0, 4.5, 1.0, 4.0, 4.6, 1.0),
    (5.5, 4.5, 6.0, 5.5, 4.5, 4.5, 1.5, 3.5, 4.6, 5.0),
    (6.5, 5.0, 4.5, 6.5, 5.5, 4.0, 4.0, 3.0, 4.6, 6.5),
    (6.0, 6.5, 5.0, 5.0, 6.5, 3.0, 6.5, 2.5, 4.6, 2.0),
)
LOAF_NARROW, LOAF_REVERSED = "P05", "P09"  # invented departures from the panel


def _loaf_scores(entries, session, rng, panel):
    index = {s.name: i for i, s in enumerate(LOAF_SAMPLES)}
    grand = np.mean(LOAF_PROFILES, axis=0)
    rows = []
    for e in sorted(entries, key=lambda e: (e.panelist_code, e.position)):
        offset, scale = panel[e.panelist_code]
        for j, name in enumerate(LOAF_ATTRIBUTES):
            effect = LOAF_PROFILES[index[e.sample_name]][j] - grand[j]
            if e.panelist_code == LOAF_REVERSED and name == "sourness":
                effect = -effect
            score = grand[j] + offset[j] + scale * effect + rng.normal(0, 0.7)
            rows.append({"session": session, "panelist": e.panelist_code, "code": e.code,
                         "attribute": name, "value": str(int(np.clip(np.rint(score), 0, 10)))})
    return rows


def _loaf(store) -> int:
    attributes = tuple(Attribute(name, AttributeKind.INTENSITY, 0, 10, ("none", "very strong"))
                       for name in LOAF_ATTRIBUTES)
    study = service.create_trial(
        store, name=LOAF, method=methods.RATING, product="sandwich loaf",
        objective="Profile four flour blends with the trained panel: where do the half "
                  "wholemeal, light rye and sourdough loaves stand against the house white "
                  "loaf, attribute by attribute?",
        alpha=0.05, beta=0.20, delta=1.0, samples=LOAF_SAMPLES, attributes=attributes,
        created_on=dt.date(2026, 6, 1), by=BY,
    )
    for k, (sample, hydration, proof) in enumerate(zip(LOAF_SAMPLES, (62, 68, 66, 70),
                                                       (60, 55, 50, 720))):
        service.add_batch(
            store, study.id, sample.name, "L1", prepared_on=dt.date(2026, 6, 2),
            prepared_by="Bakery section",
            settings=[("hydration", hydration, "%"), ("final proof", proof, "min"),
                      ("oven temperature", 220, "°C")],
            measures=[("loaf volume", (2450, 2200, 2050, 2300)[k], "mL"),
                      ("core temperature", 97.0, "°C")],
            by=BY,
        )
        service.sign_off_batch(store, study.id, sample.name, "L1", by="Sous chef (food safety)",
                               on=dt.date(2026, 6, 2))
    codes = _eligible(LOAF_SAMPLES, 12)
    rng = np.random.default_rng(4121)
    panel = {c: (rng.normal(0, 0.6, size=len(LOAF_ATTRIBUTES)),
                 0.35 if c == LOAF_NARROW else float(rng.normal(1.0, 0.08))) for c in codes}
    for session, seed_, day in (("1", 601, 3), ("2", 602, 4)):
        entries = service.draw_plan(store, study.id, panelist_codes=codes, session=session,
                                    seed=seed_, by=BY)
        _import(store, study.id, _loaf_scores(entries, session, rng, panel),
                dt.datetime(2026, 6, day, 10, 0))
    return study.id


def _rolls(store) -> int:
    """The recipe experiment: designed runs, signed off, tasted in incomplete blocks."""
    exp = service.create_experiment(
        store, name=ROLLS, kind="ccd-face", factors=list(ROLL_FACTORS), center_points=3,
        seed=310, product="white bread roll", allergens=("gluten",),
        attributes=[Attribute("overall liking", AttributeKind.HEDONIC, 1, 9, HEDONIC_9)],
        objective="Which proof time, salt and oven temperature give the best liking "
                  "without losing yield?", created_on=dt.date(2026, 3, 10), by=BY)
    rng = np.random.default_rng(310)
    for r in exp.runs:
        x1, x2, x3 = r.coded
        service.record_run_measures(store, exp.id, r.run, [
            ("yield", round(93.0 - 1.1 * x3 - 0.4 * x1 - 0.5 * x3 ** 2
                            + rng.normal(0, 0.25), 1), "%"),
            ("core temperature", round(96.0 + 1.5 * x3 + rng.normal(0, 0.4), 1), "°C"),
        ], by=BY)
    service.sign_off_runs(store, exp.id, by="Sous chef (food safety)", on=dt.date(2026, 3, 11))
    samples = service.get_trial(store, exp.trial_id).samples
    codes = _eligible(samples, 16)
    entries = service.plan_experiment_tasting(store, exp.id, panelist_codes=codes,
                                              per_panelist=6, seed=311, by=BY)
    coded = {r.sample_name: r.coded for r in exp.runs}
    panel = {c: rng.normal(0, 0.6) for c in codes}
    rows = []
    for e in sorted(entries, key=lambda e: (e.panelist_code, e.position)):
        x1, x2, x3 = coded[e.sample_name]
        mu = (6.6 + 0.5 * x1 - 0.2 * x2 + 0.3 * x3 - 0.7 * x1 ** 2 - 0.9 * x2 ** 2
              - 0.6 * x3 ** 2 + 0.25 * x1 * x3)
        score = int(np.clip(np.rint(mu + panel[e.panelist_code] + rng.normal(0, 0.7)), 1, 9))
        rows.append({"session": e.session, "panelist": e.panelist_code, "code": e.code,
                     "attribute": "overall liking", "value": str(score)})
    _import(store, exp.trial_id, rows, dt.datetime(2026, 3, 11, 11, 0))
    return exp.trial_id


def _curd(store) -> int:
    """A trial whose ballots are open: plan drawn, links made, one panelist done."""
    samples = (
        Sample("Curd, usual sugar", is_control=True, allergens=("egg", "milk"),
               description="House lemon curd, 180 g sugar per litre of juice."),
        Sample("Curd, less sugar", allergens=("egg", "milk"),
               description="150 g sugar per litre."),
        Sample("Curd, least sugar", allergens=("egg", "milk"),
               description="120 g sugar per litre."),
    )
    study = service.create_trial(
        store, name=CURD, method=methods.RANKING, product="lemon curd",
        objective="Do panelists rank the curds by sweetness in the order of their sugar? "
                  "Rank 1: the sweetest.",
        alpha=0.05, samples=samples, created_on=dt.date(2026, 6, 1), by=BY,
    )
    for sample, sugar in zip(samples, (180, 150, 120)):
        service.add_batch(
            store, study.id, sample.name, "L1", prepared_on=dt.date(2026, 6, 2),
            prepared_by="Pastry section",
            settings=[("sugar", sugar, "g/L"), ("cook temperature", 82, "°C")],
            measures=[("Brix", 58 - (180 - sugar) / 10, "°Bx")],
            safety_signed_by="Sous chef (food safety)", safety_signed_on=dt.date(2026, 6, 2),
            by=BY,
        )
    codes = _eligible(samples, 12)
    entries = service.draw_plan(store, study.id, panelist_codes=codes, session="1", seed=8587,
                                by=BY)
    sweet = {s.name: rank for rank, s in enumerate(samples, start=1)}
    rows = [{"session": "1", "panelist": codes[0], "code": e.code, "attribute": "rank",
             "value": str(sweet[e.sample_name])}
            for e in entries if e.panelist_code == codes[0]]
    _import(store, study.id, rows, dt.datetime(2026, 6, 2, 15, 0))
    for code in codes:  # every panelist's tasting link exists from the start
        service.panelist_token(store, study.id, code)
    return study.id


def seed(store) -> list[int]:
    """Add the demo roster and trials that are missing; the demo trials' ids."""
    _roster(store)
    ids = []
    for name, make in ((BRIOCHE, _brioche), (COATINGS, _coatings), (SOUP, _soup),
                       (CRUMB, _crumb), (LOAF, _loaf), (ROLLS, _rolls), (CURD, _curd)):
        found = _exists(store, name)
        ids.append(found if found is not None else make(store))
    return ids


def write_sample_data(folder: str | Path, store=None) -> list[Path]:
    """Write the demo's CSV files into ``folder`` (seeding a temporary store if needed).

    Files: ``panelists.csv`` (roster), ``<trial>_responses.csv`` (the response format of
    ``trials import responses``), ``coatings_batches.csv`` (the batch format of
    ``import_batches``) and ``coatings_<attribute>.csv`` (``panelist sample score
    replicate``, for ``trials analyze ratings``).
    """
    import tempfile

    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        own = store is None
        if own:
            store = service.open_store(f"sqlite:///{Path(tmp) / 'demo.db'}")
        try:
            ids = dict(zip(NAMES, seed(store), strict=True))
            written = []
            roster = pd.DataFrame([
                {"code": p.code, "allergens": ";".join(p.allergens),
                 "restrictions": p.restrictions, "consent_on": p.consent_on.isoformat()}
                for p in service.list_panelists(store) if p.code in PANELISTS
            ])
            path = folder / "panelists.csv"
            roster.to_csv(path, index=False)
            written.append(path)
            for name, stem in ((BRIOCHE, "brioche_triangle"), (COATINGS, "coatings_rating"),
                               (SOUP, "soup_preference")):
                path = folder / f"{stem}_responses.csv"
                service.export_answers(store, ids[name], path)
                written.append(path)
            m = service.measures_frame(store, ids[COATINGS])
            batches = pd.DataFrame({"sample": m["sample"], "batch": m["batch"],
                                    "kind": m["kind"], "name": m["name"], "value": m["text"],
                                    "unit": m["unit"]})
            path = folder / "coatings_batches.csv"
            batches.to_csv(path, index=False)
            written.append(path)
            frame = service.answers_frame(store, ids[COATINGS])
            for attr in EFFECTS:
                part = frame[frame["attribute"] == attr]
                tidy = pd.DataFrame({"panelist": part["panelist"], "sample": part["sample"],
                                     "score": part["score"].astype(int), "replicate": 1})
                path = folder / f"coatings_{attr.replace(' ', '_')}.csv"
                tidy.sort_values(["panelist", "sample"]).to_csv(path, index=False)
                written.append(path)
            frame = service.answers_frame(store, ids[LOAF])
            frame["replicate"] = frame["session"].astype(int)
            tidy = pd.DataFrame({"panelist": frame["panelist"], "sample": frame["sample"],
                                 "attribute": frame["attribute"],
                                 "score": frame["score"].astype(int),
                                 "replicate": frame["replicate"]})
            path = folder / "loaf_profile.csv"
            tidy.sort_values(["panelist", "sample", "attribute", "replicate"]).to_csv(
                path, index=False)
            written.append(path)
            return written
        finally:
            if own:
                store.close()


if __name__ == "__main__":  # python -m trials.demo sample_data
    for p in write_sample_data(sys.argv[1] if len(sys.argv) > 1 else "sample_data"):
        print(p)


def seed_demo(store) -> list[TrialSummary]:
    """Seed the invented demo trials; running it twice adds nothing. Returns their lines
    of the list of trials."""
    ids = seed(store)
    return [x for x in service.list_trials(store) if x.id in ids]
