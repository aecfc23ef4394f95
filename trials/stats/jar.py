"""Penalty analysis of just-about-right (JAR) scales against overall liking."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from trials.errors import TrialsError
from trials.model import Record
from trials.stats.ratings import (
    LINE_RULE,
    _lines,
    check_unique,
    label_codes,
    numeric_column,
    require_columns,
)

GROUPS = ("too little", "just right", "too much")


@dataclass(frozen=True, slots=True)
class JarRow(Record):
    """One JAR group of one attribute (and sample).

    ``share`` is the fraction of the attribute's answers in the group; ``mean_liking``
    the group's mean overall liking; ``drop`` = mean liking of the just-right group
    minus this group's (None for the just-right group or an empty group); ``penalty``
    = ``drop * share`` (the weighted penalty); ``p_value`` Welch's two-sided t test of
    the drop; ``flagged`` when the off-JAR group holds at least ``threshold`` of the
    answers.
    """

    sample: str | None
    attribute: str
    group: str
    n: int
    share: float
    mean_liking: float | None
    drop: float | None
    penalty: float | None
    p_value: float | None
    flagged: bool


@dataclass(frozen=True, slots=True)
class JarPenalty(Record):
    """Penalty analysis for every JAR attribute (per sample when a sample column is given)."""

    liking: str
    attributes: tuple[str, ...]
    sample: str | None
    low: int
    high: int
    threshold: float
    method: str
    rows: tuple[JarRow, ...]

    def to_frame(self) -> pd.DataFrame:
        return pd.DataFrame([r.to_dict() for r in self.rows])

    def flagged(self) -> tuple[JarRow, ...]:
        """The off-JAR groups at or above the share threshold, largest penalty first."""
        rows = [r for r in self.rows if r.flagged]
        return tuple(sorted(rows, key=lambda r: -(r.penalty or 0.0)))


def jar_penalty(
    data: pd.DataFrame,
    attributes: Sequence[str],
    *,
    liking: str = "liking",
    sample: str | None = "sample",
    panelist: str = "panelist",
    low: int = 1,
    high: int = 5,
    liking_low: float | None = None,
    liking_high: float | None = None,
    threshold: float = 0.20,
) -> JarPenalty:
    """Penalty analysis: how much overall liking falls when an attribute is not just right.

    Parameters
    ----------
    data : DataFrame
        One row per panelist (and sample): a column per JAR attribute and an overall
        liking column.
    attributes : sequence of str
        The JAR attribute columns, scored on integer points ``low..high`` (odd count).
    liking : str
        Overall liking column (e.g. the 9-point hedonic scale).
    sample : str or None
        Sample column; None (or absent from the call's intent) pools all rows.
    panelist : str
        Panelist column, used to reject a panelist/sample given twice.
    low, high : int
        JAR scale ends; the middle point is "just right".
    liking_low, liking_high : float, optional
        Declared ends of the liking scale.
    threshold : float
        Share at or above which an off-JAR group is flagged (0.20).

    Returns
    -------
    JarPenalty
        Three rows per attribute (and sample): too little, just right, too much.

    Notes
    -----
    Points below the middle are collapsed to "too little", above it to "too much"
    (on the 5-point JAR scale: 1-2, 3, 4-5). For each off-JAR group g of an
    attribute: ``share_g = n_g / n``; ``drop_g = mean(liking | JAR) - mean(liking | g)``;
    weighted penalty ``drop_g * share_g``. The drop's p-value is Welch's two-sided t
    test (Welch 1947; ``scipy.stats.ttest_ind(equal_var=False)``), None when a group
    has fewer than two answers. Flagging groups that hold 20 % or more of the answers
    is common practice (no published source is claimed). The analysis is descriptive:
    the groups are self-selected, so a drop is an association, not a cause.

    References
    ----------
    Welch, B. L. (1947). Biometrika 34(1-2):28-35. Penalty analysis of JAR data is
    described in ASTM MNL63 (Rothman and Parker, eds., 2009), Just-About-Right (JAR)
    Scales: Design, Usage, Benefits, and Risks.
    """
    attributes = list(attributes)
    if not attributes:
        raise TrialsError("name at least one JAR attribute column")
    if not (isinstance(low, int) and isinstance(high, int)) or high - low < 2 or (high - low) % 2:
        raise TrialsError(
            f"a JAR scale needs an odd number of integer points, got {low!r}..{high!r}"
        )
    if not 0 < threshold <= 1:
        raise TrialsError(f"threshold must lie in (0, 1], got {threshold!r}")
    cols = attributes + [liking, panelist] + ([sample] if sample else [])
    require_columns(data, cols)
    like = numeric_column(data, liking, low=liking_low, high=liking_high)
    p_codes, p_names = label_codes(data, panelist)
    s_names: Sequence[str | None]  # [None]: one unnamed sample
    if sample:
        s_codes, s_names = label_codes(data, sample)
        check_unique([p_codes, s_codes], [len(p_names), len(s_names)], [panelist, sample])
    else:
        s_codes, s_names = np.zeros(len(data), dtype=np.int64), [None]
        check_unique([p_codes], [len(p_names)], [panelist])
    mid = (low + high) // 2
    rows: list[JarRow] = []
    for attr in attributes:
        jar = numeric_column(data, attr, low=low, high=high)
        off = np.flatnonzero(jar != np.round(jar))
        if len(off):
            raise TrialsError(
                f"column {attr!r}: JAR points must be whole numbers, see line(s) "
                f"{_lines(off)}; {LINE_RULE}"
            )
        group = np.where(jar < mid, 0, np.where(jar > mid, 2, 1))
        for si, sname in enumerate(s_names):
            mask = s_codes == si
            n_all = int(mask.sum())
            ref = like[mask & (group == 1)]
            ref_mean = float(ref.mean()) if len(ref) else None
            for g, gname in enumerate(GROUPS):
                vals = like[mask & (group == g)]
                n_g = len(vals)
                share = n_g / n_all
                mean_g = float(vals.mean()) if n_g else None
                drop = penalty = p = None
                if g != 1 and mean_g is not None and ref_mean is not None:  # n_g > 0
                    drop = ref_mean - mean_g
                    penalty = drop * share
                    if n_g >= 2 and len(ref) >= 2:
                        res = stats.ttest_ind(ref, vals, equal_var=False)
                        p = float(res.pvalue) if math.isfinite(res.pvalue) else None
                rows.append(
                    JarRow(
                        sample=sname,
                        attribute=attr,
                        group=gname,
                        n=n_g,
                        share=share,
                        mean_liking=mean_g,
                        drop=drop,
                        penalty=penalty,
                        p_value=p,
                        flagged=bool(g != 1 and share >= threshold),
                    )
                )
    return JarPenalty(
        liking=liking,
        attributes=tuple(attributes),
        sample=sample,
        low=low,
        high=high,
        threshold=threshold,
        method=(
            f"penalty analysis: JAR points below {mid} = too little, {mid} = just right, above "
            f"{mid} = too much; drop = mean liking of just right minus the group's; weighted "
            f"penalty = drop x share; groups with share >= {threshold:g} flagged (common "
            "practice); Welch t test of each drop"
        ),
        rows=tuple(rows),
    )
