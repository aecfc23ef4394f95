"""One call that builds a whole serving plan for a session of a trial.

The service layer calls :func:`serving_plan` with names and codes it read from the
store, and stores the entries it returns. Pure: no I/O.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from trials.design._common import RngLike, as_generator, whole
from trials.design.blocks import incomplete_blocks
from trials.design.codes import POOL, blinding_codes
from trials.design.sets import coded_sets, discrimination_sets
from trials.design.williams import williams_design
from trials.errors import TrialsError
from trials.methods import Scoring, get_method
from trials.model import PlanEntry


def _unique(values: Sequence[str], what: str) -> list[str]:
    out = [str(v) for v in values]
    if not out:
        raise TrialsError(f"a serving plan needs at least one {what}; got none")
    seen: set[str] = set()
    for v in out:
        if v in seen:
            raise TrialsError(f"{what} {v!r} is listed twice")
        seen.add(v)
    return out


def serving_plan(
    method: str,
    sample_names: Sequence[str],
    panelist_codes: Sequence[str],
    *,
    session: str = "1",
    rng: RngLike = None,
    exclude_codes: Iterable[object] = (),
    per_panelist: int | None = None,
    reference: str = "balanced",
    session_index: int | None = None,
    target: str | None = None,
) -> list[PlanEntry]:
    """The serving plan of one session: who gets which coded cup, in which order.

    Parameters
    ----------
    method : str
        A method of the registry.
    sample_names : sequence of str
        The samples. Forced-choice methods need exactly two: the first is sample
        ``A`` (list the control first), the second ``B``; with ``target`` given, the
        target sample takes the method's target role whatever the order.
    panelist_codes : sequence of str
        The panelists, in the order they are assigned to the design's rows.
    session : str
        The session's label, copied into every entry.
    rng : int, numpy.random.Generator or None
        Seed or generator. For replicated rating sessions pass the same seed for every
        session (and ``exclude_codes``): the Williams rows then move on by one per
        session. An incomplete block plan drawn with the same seed gives each
        panelist the same samples again (a replicated block); use another seed for
        other subsets.
    exclude_codes : iterable
        Codes used in the trial's other sessions; none is drawn again.
    per_panelist : int, optional
        Ratings and rankings: how many samples each panelist tastes. Fewer than the
        number of samples gives an incomplete block plan; None or all samples gives
        a Williams design.
    reference : {"balanced", "constant"}
        Duo-trio only, see :func:`trials.design.sets.discrimination_sets`.
    session_index : int, optional
        0-based index for the Williams rotation; None reads it from ``session``
        when that is a whole number (``"2"`` -> 1), else 0.
    target : str, optional
        Target-by-role methods (2-AFC, 3-AFC: ``MethodSpec.scoring`` is
        ``TARGET_BY_ROLE``): the sample a correct answer picks. Its cups get the role
        ``MethodSpec.target_role`` (B for 2-AFC and 3-AFC) and the other sample the
        other letter, so the plan itself records the target. Must be one of
        ``sample_names``; ignored by other methods. None keeps the listed order.

    Returns
    -------
    list of PlanEntry
        Panelist by panelist, in serving order (``position`` 1-based).

    Notes
    -----
    Decisions (common practice, no source):

    - Forced choice: A is the first sample as given, not drawn at random: the
      balanced patterns already serve A and B in symmetric roles, and a constant
      duo-trio reference must be the control. Every cup gets its own code, unique in
      the whole session while the 786 usable codes suffice, else unique within each
      panelist's set. The duo-trio reference cup has role ``"R"``.
    - Ratings and rankings: one code per sample per session, the same for every
      panelist (as on paper ballots and serving sheets; the code identifies the
      sample in the responses). Sessions get new codes through ``exclude_codes``.

    Warns
    -----
    UnbalancedPlanWarning
        From the design when the panel is not a whole number of balanced blocks.
    """
    spec = get_method(method)
    samples = _unique(sample_names, "sample")
    panel = _unique(panelist_codes, "panelist code")
    gen = as_generator(rng)
    exclude = [str(c).strip() for c in exclude_codes]
    entries: list[PlanEntry] = []

    if spec.served_in_sets:
        if len(samples) != 2:
            raise TrialsError(
                f"a {spec.name} test compares exactly two samples; got {len(samples)}: "
                f"{samples!r}"
            )
        sets = discrimination_sets(spec.name, len(panel), rng=gen, reference=reference)
        free = len([c for c in POOL if c not in set(exclude)])
        scope = "plan" if free >= len(panel) * (spec.set_size or 0) else "set"
        coded = coded_sets(sets, rng=gen, exclude=exclude, scope=scope)
        if target is not None and spec.scoring is Scoring.TARGET_BY_ROLE:
            if target not in samples:
                raise TrialsError(f"the target sample {target!r} is not one of {samples!r}")
            other = next(s for s in samples if s != target)
            role = spec.target_role
            samples = [target, other] if role == "A" else [other, target]
        name = {"A": samples[0], "B": samples[1]}
        for code, cups in zip(panel, coded.sets):
            for cup in cups:
                role = "R" if spec.reference_first and cup.position == 1 else cup.letter
                entries.append(PlanEntry(
                    session=session, panelist_code=code, position=cup.position,
                    code=cup.code, sample_name=name[cup.letter], set_index=0, role=role,
                ))
        return entries

    t = len(samples)
    k = t if per_panelist is None else whole(per_panelist, "per_panelist", minimum=1)
    if k > t:
        raise TrialsError(f"per_panelist={k} is more than the {t} samples")
    if session_index is None:
        session_index = int(session) - 1 if str(session).isdigit() and int(session) > 0 else 0
    if t == 1 or k == 1:
        raise TrialsError(
            f"a {spec.name} plan needs at least two samples per panelist; got "
            f"{t} sample(s) and per_panelist={k}"
        )
    if k == t:
        orders = williams_design(t, panelists=len(panel), rng=gen, session=session_index).orders
    else:
        orders = incomplete_blocks(t, k, panelists=len(panel), rng=gen).blocks
    codes = blinding_codes(t, rng=gen, exclude=exclude).codes
    for code, order in zip(panel, orders):
        for position, s in enumerate(order, start=1):
            entries.append(PlanEntry(
                session=session, panelist_code=code, position=position,
                code=codes[s], sample_name=samples[s], set_index=0, role="",
            ))
    return entries

