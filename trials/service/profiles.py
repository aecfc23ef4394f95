"""Use cases of descriptive profiles and rating power: the multivariate view of a rating
trial with several intensity attributes (PCA map with bootstrap ellipses, MANOVA,
spider chart, panelist departures), and how many panelists a rating trial needs for
the smallest difference of means that matters, from the panel's own error on file."""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from trials.errors import TrialsError
from trials.methods import Family, get_method
from trials.model import AttributeKind, Record, Trial
from trials.service.results import TrialFile, analyse_file, trial_file
from trials.store import Store
from trials.store import trials as trial_rows

PROFILE_MIN_ATTRIBUTES = 3  # a map of two attributes is a scatter plot (common practice)
PROFILE_BOOTSTRAP = 500  # virtual panels for the ellipses
PROFILE_SEED = 2005  # fixed, so the same answers always draw the same ellipses
ERROR_TRIALS = 12  # earlier rating trials offered as the panel's error


def profile_attributes(study: Trial) -> list[str]:
    """The trial's intensity attributes: those a descriptive profile maps."""
    return [a.name for a in study.attributes if a.kind == AttributeKind.INTENSITY]


def profile_frame(f: TrialFile, attributes=None) -> pd.DataFrame:
    """Tidy scores of a trial file's intensity attributes (or of ``attributes``):
    ``panelist sample attribute score replicate`` (a panelist's repeated scores of a
    sample, e.g. in later sessions, are replicates 1, 2, ...); answers off the plan or
    not numbers are left out."""
    from trials.analysis import decode_responses

    names = set(profile_attributes(f.study) if attributes is None else attributes)
    cols = ["panelist", "sample", "attribute", "score", "replicate"]
    rows = [r for r in f.responses if r.attribute in names]
    if not rows:
        return pd.DataFrame(columns=cols)
    frame = decode_responses(list(f.plan), rows)
    frame = frame[frame["sample"] != ""].copy()
    frame["score"] = pd.to_numeric(frame["value"].astype(str).str.replace(",", "."),
                                   errors="coerce")
    frame = frame[frame["score"].notna()].sort_values(["session", "panelist"], kind="stable")
    frame["replicate"] = frame.groupby(["panelist", "sample", "attribute"]).cumcount() + 1
    return frame[cols].reset_index(drop=True)


def profile_of_file(f: TrialFile, *, n_boot: int = PROFILE_BOOTSTRAP, seed: int = PROFILE_SEED):
    """The :class:`trials.stats.profile.DescriptiveProfile` of a trial file; None when
    the trial is not a rating trial, has fewer than three intensity attributes or no
    intensity scores yet."""
    if get_method(f.study.method).family != Family.RATING:
        return None
    if len(profile_attributes(f.study)) < PROFILE_MIN_ATTRIBUTES:
        return None
    frame = profile_frame(f)
    if frame.empty:
        return None
    from trials.stats.profile import descriptive_profile

    replicate = "replicate" if frame["replicate"].max() > 1 else None
    return descriptive_profile(frame, replicate=replicate, alpha=f.study.alpha,
                               n_boot=n_boot, rng=seed)


def trial_profile(store: Store, trial_id: int, *, n_boot: int = PROFILE_BOOTSTRAP,
                  seed: int = PROFILE_SEED):
    """The trial's descriptive profile from one snapshot (see :func:`profile_of_file`)."""
    return profile_of_file(trial_file(store, trial_id), n_boot=n_boot, seed=seed)


def panelist_departures_of(store: Store, trial_id: int, attribute: str):
    """The sample x panelist interaction of one rated attribute and how each panelist
    departs from the panel (:func:`trials.stats.profile.panelist_interaction`)."""
    from trials.stats.profile import panelist_interaction

    f = trial_file(store, trial_id)
    frame = profile_frame(f, [attribute])
    if frame.empty:
        raise TrialsError(f"no scores on file for attribute {attribute!r}")
    replicate = "replicate" if frame["replicate"].max() > 1 else None
    result = panelist_interaction(frame, replicate=replicate, alpha=f.study.alpha)
    return result.attributes[0], result.rule


# ---------------------------------------------------------------- rating power


@dataclass(frozen=True, slots=True)
class PanelError(Record):
    """The error of one attribute of an earlier rating trial, for planning the next."""

    trial_id: int
    trial: str
    attribute: str
    sd: float
    df: float
    source: str


def panel_errors(store: Store, *, exclude: int | None = None,
                 limit: int = ERROR_TRIALS) -> list[PanelError]:
    """The error standard deviation of each analysed attribute of the latest rating
    trials on file (:func:`trials.stats.power.rating_error_sd`), newest first."""
    from trials.stats.power import rating_error_sd

    with store.read() as tx:
        found = [t for t in trial_rows.list_trials(tx)
                 if t.id != exclude and get_method(t.method).family == Family.RATING]
    out = []
    for t in found[:limit]:
        analysis = analyse_file(trial_file(store, t.id))
        for at in analysis.attributes:
            if at.anova is None:
                continue
            err = rating_error_sd(at.anova)
            if err.sd > 0:
                out.append(PanelError(t.id, t.name, at.attribute, err.sd, err.df, err.source))
    return out


def rating_power_curve(delta: float, *, sd: float, samples: int, alpha: float, ns,
                       design: str = "blocked") -> pd.DataFrame:
    """Power of the F test of samples against the number of panelists for the smallest
    difference ``delta`` (:func:`trials.stats.power.anova_power`); columns ``n power``."""
    from trials.stats.power import anova_power, rating_effect_size

    f = rating_effect_size(delta, sd, samples=samples)
    found = [anova_power(f, int(n), samples=samples, alpha=alpha, design=design) for n in ns]
    return pd.DataFrame({"n": [r.n for r in found], "power": [r.power for r in found]})


def rating_panel_size_needed(store: Store, trial_id: int, *, sd: float | None = None,
                             from_trial: int | None = None, attribute: str | None = None,
                             design: str = "blocked"):
    """How many panelists a rating trial needs for its alpha, beta and smallest
    difference of means (``delta``), with the error ``sd`` given or read from an earlier
    trial's attribute (:func:`trials.stats.power.rating_panel_size`). None when the
    trial is not a rating trial or has no delta yet."""
    from trials.stats.power import rating_error_sd, rating_panel_size

    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
    if get_method(study.method).family != Family.RATING or not study.delta:
        return None
    source = "given"
    if sd is None:
        if from_trial is None or attribute is None:
            raise TrialsError("give the error sd, or an earlier trial and attribute to read "
                              "it from")
        earlier = analyse_file(trial_file(store, from_trial))
        at = next((a for a in earlier.attributes if a.attribute == attribute), None)
        if at is None or at.anova is None:
            raise TrialsError(f"trial {from_trial} has no analysis of variance for "
                              f"attribute {attribute!r}")
        err = rating_error_sd(at.anova)
        sd = err.sd
        source = f"{err.source}: trial {from_trial} ({earlier.study_name}), {attribute}"
    return rating_panel_size(study.delta, sd=sd, samples=max(2, len(study.samples)),
                             alpha=study.alpha, beta=study.beta, design=design,
                             sd_source=source)
