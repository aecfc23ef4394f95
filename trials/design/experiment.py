"""Designed recipe experiments: runs over 2 to 6 process settings (factors).

The design matrices come from pyDOE3 (``fracfact``, ``fracfact_by_res``, ``pbdesign``,
``ccdesign``, ``bbdesign``); this module adds what a kitchen needs around them: the
factors' units and ranges, coded -> actual settings, centre points, blocks, a seeded
random run order, the refusal of runs outside the kitchen's declared safe ranges, and
for two-level designs the defining relation, resolution and alias structure, computed
here from the design's columns (a word is in the defining relation when the product of
its columns is constant over the factorial runs).

References
----------
Box, G. E. P., Hunter, J. S. and Hunter, W. G. (2005). Statistics for Experimenters,
2nd ed., Wiley, ch. 5-6 (two-level factorials and fractions, defining relation,
resolution) and ch. 11 (central composite designs). Plackett, R. L. and Burman, J. P.
(1946). The design of optimum multifactorial experiments. Biometrika 33, 305-325.
Box, G. E. P. and Behnken, D. W. (1960). Some new three level designs for the study of
quantitative variables. Technometrics 2, 455-475. Montgomery, D. C. (2017). Design and
Analysis of Experiments, 9th ed., Wiley, ch. 6-8 and 11.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import combinations

import numpy as np
import pandas as pd
import pyDOE3

from trials.design._common import RngLike, as_generator
from trials.errors import TrialsError
from trials.model import ExperimentFactor, Record

FULL_FACTORIAL = "full-factorial"
FRACTIONAL_FACTORIAL = "fractional-factorial"
PLACKETT_BURMAN = "plackett-burman"
CCD_FACE = "ccd-face"
CCD_ROTATABLE = "ccd-rotatable"
BOX_BEHNKEN = "box-behnken"
KINDS = (FULL_FACTORIAL, FRACTIONAL_FACTORIAL, PLACKETT_BURMAN, CCD_FACE, CCD_ROTATABLE,
         BOX_BEHNKEN)
TWO_LEVEL = (FULL_FACTORIAL, FRACTIONAL_FACTORIAL, PLACKETT_BURMAN)
SECOND_ORDER = (CCD_FACE, CCD_ROTATABLE, BOX_BEHNKEN)
KIND_LABELS = {
    FULL_FACTORIAL: "two-level full factorial",
    FRACTIONAL_FACTORIAL: "two-level fractional factorial",
    PLACKETT_BURMAN: "Plackett-Burman screening",
    CCD_FACE: "central composite, face-centred",
    CCD_ROTATABLE: "central composite, rotatable",
    BOX_BEHNKEN: "Box-Behnken",
}
MIN_FACTORS, MAX_FACTORS = 2, 6
LETTERS = "ABCDEF"
REFERENCE = ("Box, Hunter and Hunter (2005), Statistics for Experimenters, 2nd ed., "
             "ch. 5, 6, 11; Montgomery (2017), Design and Analysis of Experiments, 9th ed., "
             "ch. 6-8, 11; design matrices by pyDOE3")
_TOL = 1e-9


# A factor is the shared record (one definition for design, store and screens).
Factor = ExperimentFactor


def make_factor(name: str, unit: str = "", *, low: float | None = None,
                high: float | None = None, levels: tuple[float, ...] | list[float] = (),
                safe_low: float | None = None, safe_high: float | None = None) -> Factor:
    """A checked :class:`Factor`: a name, low < high (or 2+ levels) and a safe range
    that holds low..high. Without a safe range the low..high range is the safe range."""
    name = str(name or "").strip()
    if not name:
        raise TrialsError("a factor needs a name")
    lv = tuple(sorted(float(x) for x in levels))
    if lv:
        if len(set(lv)) < 2:
            raise TrialsError(f"factor {name!r}: give 2 or more different levels, got {lv}")
        low, high = lv[0], lv[-1]
    if low is None or high is None:
        raise TrialsError(f"factor {name!r}: give low and high, or its levels")
    low, high = float(low), float(high)
    if not (math.isfinite(low) and math.isfinite(high)) or low >= high:
        raise TrialsError(f"factor {name!r}: low must be below high, got {low} .. {high}")
    s_low = low if safe_low is None else float(safe_low)
    s_high = high if safe_high is None else float(safe_high)
    if s_low > low or s_high < high:
        raise TrialsError(
            f"factor {name!r}: the safe range {s_low:g} .. {s_high:g} must hold low..high "
            f"({low:g} .. {high:g})")
    return Factor(name=name, unit=str(unit or ""), low=low, high=high, safe_low=s_low,
                  safe_high=s_high, levels=lv)


@dataclass(frozen=True, slots=True)
class DesignRun(Record):
    """One run: ``run`` is the randomised order (1-based), ``std_order`` the design's
    standard order, ``point`` one of ``factorial``, ``axial``, ``edge``, ``centre``."""

    run: int
    std_order: int
    block: int
    point: str
    coded: tuple[float, ...]
    settings: tuple[float, ...]


@dataclass(frozen=True, slots=True)
class ExperimentDesign(Record):
    """A designed experiment, its runs in random order and its alias structure.

    ``defining_relation`` holds the words (e.g. ``"+ABCD"``) whose column product is
    constant over the factorial runs (empty for a full factorial); ``resolution`` is
    the length of the shortest word (None for a full factorial or a second-order
    design); ``aliases`` maps each main effect and two-factor interaction to the
    effects it cannot be told apart from; ``axial`` is the coded distance of the axial
    points (central composite designs).
    """

    kind: str
    factors: tuple[Factor, ...]
    runs: tuple[DesignRun, ...]
    center_points: int
    blocks: int
    seed: int | None
    defining_relation: tuple[str, ...]
    resolution: int | None
    aliases: dict[str, tuple[str, ...]]
    block_confounded: str
    axial: float | None
    reference: str = REFERENCE

    @property
    def label(self) -> str:
        return KIND_LABELS[self.kind]

    def coded_matrix(self) -> np.ndarray:
        """Runs x factors, coded, in run order."""
        return np.array([r.coded for r in self.runs], dtype=float)

    def to_frame(self) -> pd.DataFrame:
        """One row per run in run order: run, std_order, block, point, then each
        factor's actual setting (column = factor name)."""
        rows = []
        for r in self.runs:
            row = {"run": r.run, "std_order": r.std_order, "block": r.block, "point": r.point}
            row.update({f.name: v for f, v in zip(self.factors, r.settings)})
            rows.append(row)
        return pd.DataFrame(rows)


def _letters(k: int) -> list[str]:
    return list(LETTERS[:k])


def _word(idx: tuple[int, ...]) -> str:
    return "".join(LETTERS[i] for i in idx)


def defining_words(matrix: np.ndarray) -> list[tuple[str, int]]:
    """Words (factor letters, sign) whose column product is constant over ``matrix``
    (the +-1 factorial runs): the defining relation of a regular two-level fraction,
    Box, Hunter and Hunter (2005) section 6.3. Shortest words first."""
    k = matrix.shape[1]
    out = []
    for size in range(1, k + 1):
        for idx in combinations(range(k), size):
            prod = np.prod(matrix[:, idx], axis=1)
            if np.all(np.abs(prod - prod[0]) < _TOL) and abs(abs(prod[0]) - 1) < _TOL:
                out.append((_word(idx), int(round(prod[0]))))
    return out


def _multiply(a: str, b: str) -> str:
    """Product of two effect words (letters squared vanish)."""
    return "".join(sorted(set(a) ^ set(b), key=LETTERS.index))


def alias_structure(words: list[tuple[str, int]], k: int) -> dict[str, tuple[str, ...]]:
    """Each main effect and two-factor interaction -> its aliases (with the sign of the
    defining word), from the defining relation, BH&H (2005) section 6.3."""
    effects = _letters(k) + ["".join(p) for p in combinations(_letters(k), 2)]
    out: dict[str, tuple[str, ...]] = {}
    for e in effects:
        aliases = []
        for w, sign in words:
            a = _multiply(e, w)
            if a:
                aliases.append(("-" if sign < 0 else "") + a)
        out[e] = tuple(sorted(aliases, key=lambda s: (len(s.lstrip("-")), s)))
    return out


def _two_level(kind: str, k: int, resolution: int | None,
               generators: str | None) -> np.ndarray:
    if kind == FULL_FACTORIAL:
        # a full factorial is the fraction with no generated column
        return np.asarray(pyDOE3.fracfact(" ".join(_letters(k)).lower()), dtype=float)
    if kind == PLACKETT_BURMAN:
        return np.asarray(pyDOE3.pbdesign(k), dtype=float)
    if generators:
        words = generators.lower().split()
        if len(words) != k or any(set(w) - set(LETTERS.lower()[:k]) for w in words):
            raise TrialsError(f"generators {generators!r}: give {k} words over the letters "
                              f"{LETTERS[:k].lower()} (e.g. 'a b c abc')")
        return np.asarray(pyDOE3.fracfact(" ".join(words)), dtype=float)
    res = 3 if resolution is None else int(resolution)
    if res < 3:
        raise TrialsError(f"a fractional factorial needs resolution 3 or more, got {res}")
    # the half fraction whose last factor is the product of the others has resolution k
    # (BH&H 2005, section 6.2); fracfact_by_res does not offer every fraction
    half = (np.asarray(pyDOE3.fracfact(" ".join([*_letters(k - 1), _word(
        tuple(range(k - 1)))]).lower()), dtype=float) if k >= res else None)
    try:
        found = np.asarray(pyDOE3.fracfact_by_res(k, res), dtype=float)
    except ValueError:
        found = None
    if half is not None and (found is None or len(half) <= len(found)):
        return half  # as few runs, and a higher resolution
    if found is None:
        raise TrialsError(f"no two-level fraction of {k} factors has resolution {res}")
    return found


def _block_column(m: np.ndarray, words: list[tuple[str, int]],
                  blocks: int) -> tuple[np.ndarray, str]:
    """Blocks of a two-level design by confounding with the longest interaction that is
    not in the defining relation (BH&H 2005, section 5.15)."""
    if blocks == 1:
        return np.ones(len(m), dtype=int), ""
    k = m.shape[1]
    taken = {w for w, _ in words}
    for size in range(k, 1, -1):
        for idx in combinations(range(k), size):
            word = _word(idx)
            aliased = {_multiply(word, w) for w in taken}
            if word in taken or any(len(a) < 2 for a in aliased):
                continue
            prod = np.prod(m[:, idx], axis=1)
            return np.where(prod > 0, 2, 1), word
    raise TrialsError("this design has no interaction to confound with blocks")


def experiment_design(
    kind: str,
    factors: list[Factor] | tuple[Factor, ...],
    *,
    center_points: int = 0,
    blocks: int = 1,
    resolution: int | None = None,
    generators: str | None = None,
    rng: RngLike = None,
) -> ExperimentDesign:
    """A designed experiment over 2 to 6 factors, in a seeded random run order.

    Parameters
    ----------
    kind : str
        One of :data:`KINDS`.
    factors : list of Factor
        The process settings (see :func:`make_factor`).
    center_points : int
        Runs at the centre of every factor (all designs; for central composite designs
        split between the factorial and axial blocks). They give the pure error that the
        lack of fit is tested against.
    blocks : int
        1 or 2. Two-level designs confound the block with the longest interaction not
        in the defining relation; central composite designs put the factorial points in
        block 1 and the axial points in block 2, with the centre points split.
    resolution : int, optional
        For a fractional factorial, the resolution asked of ``fracfact_by_res`` (3 by
        default): the smallest fraction of that resolution from ``fracfact_by_res``;
        where the half fraction (the last factor the product of the others, resolution
        k) has as few runs, or ``fracfact_by_res`` has none, the half fraction.
    generators : str, optional
        For a fractional factorial, the ``fracfact`` generator words instead (e.g.
        ``"a b c abc"``); the resolution is then computed from them.
    rng : int or Generator
        Seed of the randomised order (within each block).

    Returns
    -------
    ExperimentDesign

    Raises
    ------
    TrialsError
        An unknown kind, fewer than 2 or more than 6 factors, a factor whose declared
        levels do not hold a run's setting, or a run outside a factor's safe range.

    Notes
    -----
    pyDOE3's Box-Behnken plan takes every pair of factors at +-1 with the others at
    the centre (4 C(k, 2) edge runs): as Box and Behnken (1960) for 3 to 5 factors; for 6
    factors it has 60 edge runs where the paper's plan on triples has 48.
    Assumes the factors are quantitative and the region between low and high (and, for
    a rotatable design, out to the axial distance ``(2^k)^(1/4)``) can be made.
    """
    if kind not in KINDS:
        raise TrialsError(f"unknown design {kind!r}; expected one of: {', '.join(KINDS)}")
    factors = tuple(factors)
    k = len(factors)
    if not MIN_FACTORS <= k <= MAX_FACTORS:
        raise TrialsError(f"an experiment varies {MIN_FACTORS} to {MAX_FACTORS} factors, "
                          f"got {k}")
    if len({f.name for f in factors}) != k:
        raise TrialsError("factor names must differ")
    center_points = int(center_points)
    if center_points < 0 or center_points > 20:
        raise TrialsError(f"centre points: 0 to 20, got {center_points}")
    if blocks not in (1, 2):
        raise TrialsError(f"blocks: 1 or 2, got {blocks}")
    seed = rng if isinstance(rng, int) else None
    gen = as_generator(rng)
    axial = None
    words: list[tuple[str, int]] = []
    resolution_found: int | None = None
    confounded = ""
    if kind in TWO_LEVEL:
        m = _two_level(kind, k, resolution, generators)
        words = defining_words(m)
        resolution_found = min((len(w) for w, _ in words), default=None)
        block_of, confounded = _block_column(m, words, blocks)
        points = ["factorial"] * len(m)
        if center_points:
            m = np.vstack([m, np.zeros((center_points, k))])
            # centre points shared out between the blocks
            block_of = np.concatenate([block_of, 1 + np.arange(center_points) % blocks])
            points += ["centre"] * center_points
    elif kind in (CCD_FACE, CCD_ROTATABLE):
        face = "ccf" if kind == CCD_FACE else "ccc"
        c_f = (center_points + 1) // 2
        c_a = center_points - c_f
        m = np.asarray(pyDOE3.ccdesign(k, center=(c_f, c_a), alpha="r", face=face), dtype=float)
        n_f = 2 ** k
        axial = 1.0 if kind == CCD_FACE else float(n_f ** 0.25)
        points = (["factorial"] * n_f + ["centre"] * c_f + ["axial"] * (2 * k)
                  + ["centre"] * c_a)
        block_of = np.array([1] * (n_f + c_f) + [2 if blocks == 2 else 1] * (2 * k + c_a))
        words = defining_words(m[:n_f])
        if blocks == 2:
            confounded = "factorial vs axial points"
    else:
        if k < 3:
            raise TrialsError("a Box-Behnken design needs 3 or more factors")
        if blocks != 1:
            raise TrialsError("Box-Behnken designs here run in one block")
        m = np.asarray(pyDOE3.bbdesign(k, center=max(center_points, 0) or 1), dtype=float)
        if center_points == 0:
            m = m[np.any(m != 0, axis=1)]
        points = ["centre" if not np.any(row) else "edge" for row in m]
        block_of = np.ones(len(m), dtype=int)
    aliases = alias_structure(words, k) if kind in TWO_LEVEL else {}
    settings = _settings(factors, m)
    order = _random_order(block_of, gen)
    runs = tuple(
        DesignRun(run=i + 1, std_order=int(j) + 1, block=int(block_of[j]), point=points[j],
                  coded=tuple(float(round(v, 6)) for v in m[j]),
                  settings=tuple(settings[j]))
        for i, j in enumerate(order))
    return ExperimentDesign(
        kind=kind, factors=factors, runs=runs, center_points=center_points, blocks=blocks,
        seed=seed, defining_relation=tuple(("-" if s < 0 else "+") + w for w, s in words),
        resolution=resolution_found, aliases=aliases, block_confounded=confounded,
        axial=axial)


def _random_order(block_of: np.ndarray, gen: np.random.Generator) -> list[int]:
    order: list[int] = []
    for b in sorted(set(block_of.tolist())):
        idx = np.flatnonzero(block_of == b)
        order += [int(i) for i in gen.permutation(idx)]
    return order


def _settings(factors: tuple[Factor, ...], m: np.ndarray) -> list[list[float]]:
    """Actual settings of the coded runs; refuses a run off the declared levels or
    outside a safe range."""
    out = []
    for j, row in enumerate(m):
        values = []
        for f, c in zip(factors, row):
            v = float(round(f.actual(float(c)), 6))
            if f.levels and not any(abs(v - lv) <= 1e-6 * max(1.0, abs(lv))
                                    for lv in f.levels):
                raise TrialsError(
                    f"run {j + 1} (standard order) needs {f.name} = {v:g} {f.unit}, which is "
                    f"not one of its declared levels {', '.join(f'{x:g}' for x in f.levels)}")
            check_safe(f, v, f"run {j + 1} (standard order)")
            values.append(v)
        out.append(values)
    return out


def check_safe(factor: Factor, value: float, what: str) -> None:
    """Refuse a setting outside the factor's declared safe range (food safety)."""
    if not factor.safe_low - 1e-9 <= value <= factor.safe_high + 1e-9:
        raise TrialsError(
            f"{what} needs {factor.name} = {value:g} {factor.unit}, outside the declared safe "
            f"range {factor.safe_low:g} .. {factor.safe_high:g} {factor.unit}: refused")
