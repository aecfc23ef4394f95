"""Incomplete block designs: each panelist tastes ``k`` of the ``t`` samples.

When there are too many samples for one sitting, each panelist (a block) tastes a
subset. A balanced incomplete block design (BIBD) gives every sample the same number
of panelists ``r`` and every pair of samples the same number of shared panelists
``lambda``, so that all pairwise comparisons are equally precise. Known constructions
are used where one exists for ``(t, k)``; otherwise a seeded search finds a
near-balanced plan. The samples within each block are then put in a serving order
balanced for position and, as far as the search reaches, for first-order carry-over.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from itertools import combinations

import numpy as np

from trials.design._common import (
    RngLike,
    as_generator,
    carryover_counts,
    concurrence_matrix,
    position_counts,
    whole,
)
from trials.errors import TrialsError, UnbalancedPlanWarning
from trials.model import Record

REFERENCE = (
    "Cochran, W. G. and Cox, G. M. (1957). Experimental Designs, 2nd ed., Wiley, "
    "ch. 11 (balanced incomplete blocks); John, J. A. and Williams, E. R. (1995). "
    "Cyclic and Computer Generated Designs, 2nd ed., Chapman and Hall (efficiency "
    "factors, cyclic designs)"
)

#: Above this many blocks the complete design (every k-subset once) is not offered.
COMPLETE_LIMIT = 500

# Cyclic constructions: (v, base blocks, has_infinity). The blocks are developed
# modulo v (v - 1 when a fixed point "infinity", numbered v - 1, is added). Every
# entry is checked by the unit tests, which compute the concurrences.
_CYCLIC: tuple[tuple[int, tuple[tuple[int, ...], ...], bool, str], ...] = (
    # Singer difference sets: the projective planes PG(2, q), lambda = 1.
    (7, ((0, 1, 3),), False, "difference set {0,1,3} mod 7 (Fano plane, PG(2,2))"),
    (13, ((0, 1, 3, 9),), False, "difference set {0,1,3,9} mod 13 (PG(2,3))"),
    (21, ((0, 1, 4, 14, 16),), False, "difference set {0,1,4,14,16} mod 21 (PG(2,4))"),
    (31, ((1, 5, 11, 24, 25, 27),), False, "difference set {1,5,11,24,25,27} mod 31 (PG(2,5))"),
    # Paley difference sets: the quadratic residues modulo a prime p = 3 (mod 4).
    (11, ((1, 3, 4, 5, 9),), False, "quadratic residues {1,3,4,5,9} mod 11"),
    (19, ((1, 4, 5, 6, 7, 9, 11, 16, 17),), False, "quadratic residues mod 19"),
    (15, ((0, 1, 2, 4, 5, 8, 10),), False, "difference set {0,1,2,4,5,8,10} mod 15"),
    # Difference families with several base blocks.
    (13, ((0, 1, 4), (0, 2, 7)), False, "difference family {0,1,4}, {0,2,7} mod 13"),
    (19, ((0, 1, 4), (0, 2, 9), (0, 5, 11)), False,
     "difference family {0,1,4}, {0,2,9}, {0,5,11} mod 19"),
    (6, ((5, 0, 1), (0, 1, 3)), True, "{inf,0,1}, {0,1,3} mod 5 with a fixed point"),
)


# ---------------------------------------------------------------- finite fields


def _field(q: int) -> tuple[list[list[int]], list[list[int]]]:
    """Addition and multiplication tables of GF(q) for q = 2, 3, 4, 5."""
    if q in (2, 3, 5):
        add = [[(a + b) % q for b in range(q)] for a in range(q)]
        mul = [[(a * b) % q for b in range(q)] for a in range(q)]
        return add, mul
    if q == 4:  # GF(4) = {0, 1, x, x + 1} with x^2 = x + 1, coded 0, 1, 2, 3
        add = [[a ^ b for b in range(4)] for a in range(4)]
        mul = [[0, 0, 0, 0], [0, 1, 2, 3], [0, 2, 3, 1], [0, 3, 1, 2]]
        return add, mul
    raise TrialsError(f"no field table for q={q!r}")


def affine_plane(q: int) -> list[list[int]]:
    """The lines of the affine plane AG(2, q): a resolvable (q^2, q, 1) design.

    Points are pairs ``(x, y)`` of GF(q), numbered ``x * q + y``. The lines
    ``y = m x + c`` (one parallel class per slope ``m``) and ``x = c`` give
    ``q^2 + q`` blocks in ``q + 1`` parallel classes (the balanced lattice of
    Cochran and Cox 1957; from memory).
    """
    add, mul = _field(q)
    lines = []
    for m in range(q):
        for c in range(q):
            lines.append([x * q + add[mul[m][x]][c] for x in range(q)])
    for c in range(q):
        lines.append([c * q + y for y in range(q)])
    return lines


def lattice_16_6_2() -> list[list[int]]:
    """The symmetric (16, 6, 2) design on a 4 x 4 grid.

    Points are the 16 cells; the block of cell ``(i, j)`` holds the six other cells of
    its row and its column. Two cells in one row share the two remaining cells of that
    row; two cells in different rows and columns share the two cells at the crossings.
    """
    blocks = []
    for i in range(4):
        for j in range(4):
            row = [i * 4 + c for c in range(4) if c != j]
            col = [r * 4 + j for r in range(4) if r != i]
            blocks.append(row + col)
    return blocks


def develop(base_blocks, v: int, *, infinity: bool = False) -> list[list[int]]:
    """Develop base blocks cyclically: every base block plus ``i`` for each ``i``.

    With ``infinity`` the group is Z_(v-1) and point ``v - 1`` stays fixed. Each
    orbit holds each point once in each position of the base block, so developed
    blocks are balanced for position orbit by orbit.
    """
    mod = v - 1 if infinity else v
    blocks = []
    for base in base_blocks:
        for i in range(mod):
            blocks.append([p if infinity and p == mod else (p + i) % mod for p in base])
    return blocks


@dataclass(frozen=True, slots=True)
class _Known:
    name: str
    blocks: list[list[int]]

    @property
    def size(self) -> int:
        return len(self.blocks)


def known_designs(t: int, k: int) -> list[_Known]:
    """Balanced incomplete block designs this module can build for ``(t, k)``.

    Sorted by the number of blocks (fewest first). Includes the complements of the
    known designs for ``(t, t - k)`` and, when it has at most :data:`COMPLETE_LIMIT`
    blocks, the complete design of all ``k``-subsets.
    """
    found: list[_Known] = []

    def direct(kk: int) -> list[_Known]:
        out = []
        for v, bases, inf, name in _CYCLIC:
            if v == t and len(bases[0]) == kk:
                out.append(_Known(name, develop(bases, v, infinity=inf)))
        q = math.isqrt(t)
        if q * q == t and q == kk and q in (3, 4, 5):
            out.append(_Known(f"affine plane AG(2,{q}), resolvable", affine_plane(q)))
        if t == 16 and kk == 6:
            out.append(_Known("(16,6,2) rows and columns of a 4x4 grid", lattice_16_6_2()))
        return out

    found += direct(k)
    for d in direct(t - k):
        comp = [[s for s in range(t) if s not in set(b)] for b in d.blocks]
        found.append(_Known(f"complement of {d.name}", comp))
    if math.comb(t, k) <= COMPLETE_LIMIT:
        found.append(_Known(f"complete design, all {math.comb(t, k)} subsets",
                            [list(c) for c in combinations(range(t), k)]))
    found.sort(key=lambda d: d.size)
    return found


# ---------------------------------------------------------------- efficiency


def efficiency_factor(blocks: list[list[int]], t: int) -> float:
    """The A-efficiency factor of a block design (John and Williams 1995).

    Parameters
    ----------
    blocks : list of list of int
        The blocks (0-based samples), each without repeats.
    t : int
        Number of samples.

    Returns
    -------
    float
        ``E = (t - 1) / (rbar * sum(1 / mu_i))``, where ``mu_i`` are the ``t - 1``
        non-zero eigenvalues of the information matrix ``C = R - N N' / k`` and
        ``rbar`` the mean replication; 0.0 when the design is disconnected.

    Notes
    -----
    The average variance of an estimated difference of two sample effects is
    ``2 sigma^2 / (t - 1) * sum(1 / mu_i)`` in the block design, against
    ``2 sigma^2 / rbar`` for complete blocks with the same replication; ``E`` is the
    ratio. For a BIBD every ``mu_i = lambda t / k`` and ``E = t (k - 1) / (k (t - 1))``
    (Cochran and Cox 1957, ch. 11), the upper bound for any equireplicate design with
    blocks of size ``k``. Assumptions: additive panelist (block) and sample effects,
    independent errors of equal variance, equal block sizes.

    References
    ----------
    John, J. A. and Williams, E. R. (1995). Cyclic and Computer Generated Designs,
    2nd ed., section 2.3 (from memory).
    """
    n = len(blocks)
    incidence = np.zeros((t, n))
    for j, b in enumerate(blocks):
        incidence[b, j] = 1.0
    sizes = incidence.sum(axis=0)
    rep = incidence.sum(axis=1)
    c = np.diag(rep) - (incidence / sizes) @ incidence.T
    eig = np.linalg.eigvalsh(c)
    eig = np.sort(eig)[1:]  # drop the zero eigenvalue of the all-ones vector
    if eig.size == 0 or eig.min() < 1e-9:
        return 0.0
    return float((t - 1) / (rep.mean() * np.sum(1.0 / eig)))


# ---------------------------------------------------------------- search


def _pair_cost(lam: list[list[int]]) -> int:
    t = len(lam)
    return sum(lam[i][j] ** 2 for i in range(t) for j in range(i + 1, t))


def _greedy_blocks(t, k, n, lam, rep, gen) -> list[list[int]]:
    """Build ``n`` blocks one sample at a time: least replicated first, then the one
    sharing fewest panelists with the samples already in the block (ties at random)."""
    blocks = []
    for _ in range(n):
        chosen: list[int] = []
        for _slot in range(k):
            best, best_key = [], None
            for s in range(t):
                if s in chosen:
                    continue
                key = (rep[s], sum(lam[s][c] for c in chosen))
                if best_key is None or key < best_key:
                    best, best_key = [s], key
                elif key == best_key:
                    best.append(s)
            s = best[int(gen.integers(len(best)))]
            for c in chosen:
                lam[s][c] += 1
                lam[c][s] += 1
            rep[s] += 1
            chosen.append(s)
        blocks.append(chosen)
    return blocks


def _swap_delta(lam, blk1, blk2, x, y, set1, set2) -> int:
    """Change of the sum of squared concurrences when ``x`` (in block 1) and ``y``
    (in block 2) change places. Samples in both blocks keep their concurrences; for
    the others, ``(l - 1)^2 - l^2 + (m + 1)^2 - m^2 = 2 (m - l + 1)``."""
    lx, ly = lam[x], lam[y]
    delta = 0
    for o in blk1:
        if o != x and o not in set2:
            delta += ly[o] - lx[o] + 1
    for o in blk2:
        if o != y and o not in set1:
            delta += lx[o] - ly[o] + 1
    return 2 * delta


def _apply_swap(lam, blk1, blk2, x, y, set1, set2) -> None:
    for o in blk1:
        if o != x and o not in set2:
            lam[x][o] -= 1
            lam[o][x] -= 1
            lam[y][o] += 1
            lam[o][y] += 1
    for o in blk2:
        if o != y and o not in set1:
            lam[y][o] -= 1
            lam[o][y] -= 1
            lam[x][o] += 1
            lam[o][x] += 1
    blk1[blk1.index(x)] = y
    blk2[blk2.index(y)] = x
    set1.discard(x)
    set1.add(y)
    set2.discard(y)
    set2.add(x)


def _components(blocks, t: int) -> list[int]:
    """Union-find label of each sample, linking samples that share a block."""
    parent = list(range(t))

    def find(a: int) -> int:
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    for b in blocks:
        for s in b[1:]:
            ra, rb = find(b[0]), find(s)
            if ra != rb:
                parent[rb] = ra
    return [find(s) for s in range(t)]


def _connect(blocks, lam, gen, t: int) -> None:
    """Make the design connected (every difference of samples estimable).

    While samples fall into separate groups that never share a panelist, exchange
    one sample between a block of one group and a block of another (the exchange
    that raises the sum of squared concurrences least); each exchange joins the two
    groups. Only samples that appear in some block are considered.
    """
    served = {s for b in blocks for s in b}
    for _ in range(t):
        label = _components(blocks, t)
        groups = {label[s] for s in served}
        if len(groups) <= 1:
            return
        first = label[blocks[0][0]]
        b1 = 0
        others = [i for i, b in enumerate(blocks) if label[b[0]] != first]
        b2 = others[int(gen.integers(len(others)))]
        set1, set2 = set(blocks[b1]), set(blocks[b2])
        x, y = min(
            ((x, y) for x in blocks[b1] for y in blocks[b2]),
            key=lambda xy: _swap_delta(lam, blocks[b1], blocks[b2], xy[0], xy[1], set1, set2),
        )
        _apply_swap(lam, blocks[b1], blocks[b2], x, y, set1, set2)


def _swap_search(blocks, lam, gen, proposals: int, stall: int = 10000) -> None:
    """Exchange samples between two blocks when that does not raise the sum of squared
    concurrences (sideways moves allowed); replication never changes. Stops at the
    floor (all concurrences within one of each other), after ``proposals`` tries, or
    after ``stall`` tries without a strict gain. Half the tries are directed (the
    member of the first block sharing most with its block for the member of the
    second sharing least), half at random."""
    n = len(blocks)
    if n < 2:
        return
    members = [set(b) for b in blocks]
    t = len(lam)
    total = sum(lam[i][j] for i in range(t) for j in range(i + 1, t))
    pairs = t * (t - 1) // 2
    low, extra = divmod(total, pairs)
    floor_cost = (pairs - extra) * low * low + extra * (low + 1) ** 2
    cost = _pair_cost(lam)
    draws = gen.integers(0, 2**31, size=(proposals, 4)).tolist()
    last_gain = 0
    for i in range(proposals):
        if cost == floor_cost or i - last_gain > stall:
            break
        d0, d1, d2, d3 = draws[i]
        b1 = d0 % n
        b2 = d1 % n
        if b1 == b2:
            continue
        blk1, blk2 = blocks[b1], blocks[b2]
        if i % 2:
            # directed: move out the member of b1 that shares most with the rest of
            # b1, bring in the member of b2 that shares least with it
            j = d2 % len(blk1)
            x = max(blk1[j:] + blk1[:j], key=lambda s: sum(map(lam[s].__getitem__, blk1)))
            if x in members[b2]:
                continue
            j = d3 % len(blk2)
            outside = [s for s in blk2[j:] + blk2[:j] if s not in members[b1]]
            if not outside:
                continue
            y = min(outside, key=lambda s: sum(map(lam[s].__getitem__, blk1)) - lam[s][x])
        else:
            x = blk1[d2 % len(blk1)]
            y = blk2[d3 % len(blk2)]
            if x in members[b2] or y in members[b1]:
                continue
        delta = _swap_delta(lam, blk1, blk2, x, y, members[b1], members[b2])
        if delta > 0:
            continue
        if delta < 0:
            last_gain = i
        _apply_swap(lam, blk1, blk2, x, y, members[b1], members[b2])
        cost += delta


def _fix_positions(blocks, pos, k: int) -> None:
    """Make every sample's position counts differ by at most one.

    While a sample ``x`` is served at position ``a`` at least twice more often than at
    position ``b``, find a chain of blocks: in the first, ``x`` sits at ``a`` and some
    ``y`` at ``b``; swapping them moves ``y`` towards ``a``, so the next block has
    ``y`` at ``a``, and so on until a sample that is short of ``a`` is reached. Every
    swap along the chain exchanges positions ``a`` and ``b`` within one block; only the
    two ends change their counts, and the sum of squared counts falls. This is the
    alternating-path argument for equitable edge colourings of bipartite graphs
    (de Werra 1971; from memory).
    """
    t = len(pos)
    for _ in range(len(blocks) * k + t):
        worst = None
        for s in range(t):
            hi = max(range(k), key=lambda p: pos[s][p])
            lo = min(range(k), key=lambda p: pos[s][p])
            if pos[s][hi] - pos[s][lo] >= 2:
                worst = (s, hi, lo)
                break
        if worst is None:
            return
        x, a, b = worst
        at_a: dict[int, list[int]] = {}
        for bi, block in enumerate(blocks):
            at_a.setdefault(block[a], []).append(bi)
        parent: dict[int, tuple[int, int]] = {}
        seen_samples = {x}
        used_blocks: set[int] = set()
        queue = [x]
        end = None
        while queue and end is None:
            nxt = []
            for cur in queue:
                for bi in at_a.get(cur, ()):
                    if bi in used_blocks:
                        continue
                    y = blocks[bi][b]
                    if y in seen_samples:
                        continue
                    used_blocks.add(bi)
                    seen_samples.add(y)
                    parent[y] = (cur, bi)
                    if pos[y][a] - pos[y][b] <= -1:
                        end = y
                        break
                    nxt.append(y)
                if end is not None:
                    break
            queue = nxt
        if end is None:
            return
        y = end
        while y != x:
            cur, bi = parent[y]
            blocks[bi][a], blocks[bi][b] = blocks[bi][b], blocks[bi][a]
            y = cur
        pos[x][a] -= 1
        pos[x][b] += 1
        pos[end][a] += 1
        pos[end][b] -= 1


def _order_blocks(blocks, t, gen, *, passes: int = 30) -> None:
    """Put the samples of each block in serving order.

    First even out position counts: swap two positions of one block when that lowers
    the sum of squared position counts (then :func:`_fix_positions` finishes the job,
    so each sample's counts differ by at most one). Then, without raising that sum,
    swap positions when that lowers the sum of squared first-order carry-over counts.
    """
    k = max(len(b) for b in blocks)
    pos = [[0] * k for _ in range(t)]
    carry = [[0] * t for _ in range(t)]
    for b in blocks:
        for p, s in enumerate(b):
            pos[s][p] += 1
        for a, c in zip(b, b[1:]):
            carry[a][c] += 1

    def sweep(fix_positions_only: bool) -> None:
        order = list(range(len(blocks)))
        for _ in range(passes):
            improved = False
            gen.shuffle(order)
            for bi in order:
                b = blocks[bi]
                for a, c in zip(b, b[1:]):
                    carry[a][c] -= 1
                old_carry = sum(2 * carry[a][c] + 1 for a, c in zip(b, b[1:]))
                for i in range(len(b)):
                    for j in range(i + 1, len(b)):
                        si, sj = b[i], b[j]
                        # si moves from i to j, sj from j to i
                        d_pos = (
                            (2 * pos[si][j] + 1) - (2 * pos[si][i] - 1)
                            + (2 * pos[sj][i] + 1) - (2 * pos[sj][j] - 1)
                        )
                        if d_pos > 0 or (fix_positions_only and d_pos == 0):
                            continue
                        trial = b[:]
                        trial[i], trial[j] = sj, si
                        new_carry = 0
                        seen: dict[tuple[int, int], int] = {}
                        for a, c in zip(trial, trial[1:]):
                            extra = seen.get((a, c), 0)
                            new_carry += 2 * (carry[a][c] + extra) + 1
                            seen[(a, c)] = extra + 1
                        if d_pos < 0 or new_carry < old_carry:
                            pos[si][i] -= 1
                            pos[sj][j] -= 1
                            pos[si][j] += 1
                            pos[sj][i] += 1
                            b[i], b[j] = sj, si
                            old_carry = new_carry
                            improved = True
                for a, c in zip(b, b[1:]):
                    carry[a][c] += 1
            if not improved:
                break

    sweep(True)
    _fix_positions(blocks, pos, k)
    carry = [[0] * t for _ in range(t)]
    for b in blocks:
        for a, c in zip(b, b[1:]):
            carry[a][c] += 1
    sweep(False)


# ---------------------------------------------------------------- the result


@dataclass(frozen=True, slots=True)
class BlocksResult(Record):
    """An incomplete block plan with its balance and efficiency.

    Attributes
    ----------
    samples, per_panelist, panelists : int
        ``t``, ``k`` and the number of blocks.
    blocks : list of list of int
        One block per panelist: 0-based samples in serving order.
    construction : str
        The known construction used (stacked copies, each randomly relabelled), or
        ``"search"``, or both when copies are completed by a search.
    balanced : bool
        Every sample served equally often and every pair together equally often.
    replication_min, replication_max : int
        Fewest and most panelists serving one sample.
    lambda_min, lambda_max : int
        Fewest and most panelists tasting one pair of samples.
    efficiency : float
        Computed A-efficiency factor (see :func:`efficiency_factor`).
    efficiency_bound : float
        ``t (k - 1) / (k (t - 1))``: the efficiency factor of a BIBD, which
        ``efficiency`` equals when ``balanced``.
    connected : bool
        Every difference of samples can be estimated (``efficiency > 0``).
    position_min, position_max : int
        Fewest and most servings of one sample at one position.
    carryover_max : int
        Most servings of one ordered pair of samples one right after the other.
    reference : str
        The published methods.
    """

    samples: int
    per_panelist: int
    panelists: int
    blocks: list[list[int]]
    construction: str
    balanced: bool
    replication_min: int
    replication_max: int
    lambda_min: int
    lambda_max: int
    efficiency: float
    efficiency_bound: float
    connected: bool
    position_min: int
    position_max: int
    carryover_max: int
    reference: str = REFERENCE

    def concurrence(self) -> np.ndarray:
        """``lam[i, j]``: panelists tasting both ``i`` and ``j``; the diagonal is ``r_i``."""
        return concurrence_matrix(self.blocks, self.samples)

    def position_counts(self) -> np.ndarray:
        return position_counts(self.blocks, self.samples)

    def carryover_counts(self) -> np.ndarray:
        return carryover_counts(self.blocks, self.samples)

    def to_frame(self):
        """A long table: ``panelist`` (0-based block), ``position`` (1-based), ``sample``."""
        import pandas as pd

        rows = [
            {"panelist": i, "position": p + 1, "sample": s}
            for i, block in enumerate(self.blocks)
            for p, s in enumerate(block)
        ]
        return pd.DataFrame(rows, columns=["panelist", "position", "sample"])


def _default_panelists(t: int, k: int) -> int:
    step = t // math.gcd(t, k)
    return step * max(1, -(-t // step))


def incomplete_blocks(
    t: int, k: int, *, panelists: int | None = None, rng: RngLike = None
) -> BlocksResult:
    """A balanced (or, failing that, near-balanced) incomplete block serving plan.

    Parameters
    ----------
    t : int
        Number of samples (2 or more).
    k : int
        Samples per panelist (2 to ``t - 1``; with ``k = t`` use a Williams design).
    panelists : int, optional
        Number of panelists (blocks). None: the blocks of the smallest known BIBD for
        ``(t, k)`` if it needs at most ``3 t`` panelists, else the smallest multiple
        of ``t / gcd(t, k)`` that is at least ``t`` (so every sample can be served
        equally often) with a searched near-balanced plan.
    rng : int, numpy.random.Generator or None
        Seed or generator; the same seed gives the same plan.

    Returns
    -------
    BlocksResult
        Blocks in serving order with concurrences, balance and efficiency.

    Raises
    ------
    TrialsError
        If ``t < 2``, ``k < 2``, ``k >= t`` or ``panelists < 1``.

    Warns
    -----
    UnbalancedPlanWarning
        When the plan is not balanced (``balanced`` is False).

    Notes
    -----
    *Known designs.* Cyclic difference sets and families developed modulo ``v``
    (e.g. (7,3,1) from {0,1,3}, (13,4,1) from {0,1,3,9}, (11,5,2) from {1,3,4,5,9},
    (21,5,1), (31,6,1)), affine planes AG(2,q) for (9,3,1), (16,4,1), (25,5,1), the
    (16,6,2) design on a 4 x 4 grid, complements of these, and the complete design
    of all k-subsets when it is small. When ``panelists`` is a multiple of a known
    design's size, that many copies are stacked, each with a random relabelling of
    the samples and a random order of its blocks; the plan is then a BIBD.

    *Search.* Otherwise whole copies of the smallest known design that fits are
    kept and the remaining blocks are built greedily (least served sample first,
    then fewest shared panelists) and improved by exchanging samples between
    blocks, keeping an exchange when it does not raise the sum of squared
    concurrences; a plan that falls apart into groups of samples never tasted by
    the same panelist is then joined by exchanges. For equal replication and
    block size that sum fixes
    ``trace(C^2)``, so the search minimises it (the S-criterion of Shah 1960 and
    Eccleston and Hedayat 1974; from memory) as a stand-in for A-efficiency, which
    is then computed exactly and reported.

    *Serving order.* Within blocks, positions are exchanged until each sample's
    counts over the positions differ by at most one (exactly equal when ``k``
    divides its replication), by swaps and alternating chains of swaps (de Werra
    1971; from memory); then, keeping that, swaps that lower the sum of squared
    counts of ordered neighbour pairs (first-order carry-over) are made. Developed
    cyclic designs start out balanced for position (each orbit puts each sample
    once in each position).

    Balance and efficiency are computed from the final plan, never assumed.

    References
    ----------
    Cochran and Cox (1957), Experimental Designs, 2nd ed., ch. 11 and its plans;
    John and Williams (1995), Cyclic and Computer Generated Designs, 2nd ed.
    """
    t = whole(t, "samples", minimum=2)
    k = whole(k, "per_panelist", minimum=2)
    if k >= t:
        raise TrialsError(
            f"per_panelist must be smaller than the number of samples: got k={k} with "
            f"t={t}; when every panelist tastes every sample use a Williams design"
        )
    known = known_designs(t, k)
    if panelists is None:
        small = [d for d in known if d.size <= 3 * t]
        n = small[0].size if small else _default_panelists(t, k)
    else:
        n = whole(panelists, "panelists", minimum=1)
    gen = as_generator(rng)

    def copies(design: _Known, count: int) -> list[list[int]]:
        out = []
        for _ in range(count):
            labels = gen.permutation(t)
            relabelled = [[int(labels[s]) for s in b] for b in design.blocks]
            out += [relabelled[int(i)] for i in gen.permutation(len(relabelled))]
        return out

    fitting = [d for d in known if n % d.size == 0]
    if fitting:
        design = fitting[0]
        blocks = copies(design, n // design.size)
        construction = design.name if n == design.size else f"{n // design.size} x {design.name}"
    else:
        whole_copies = [d for d in known if d.size <= n]
        blocks = []
        construction = "search"
        if whole_copies:
            design = whole_copies[0]
            count = n // design.size
            blocks = copies(design, count)
            construction = f"{count} x {design.name} + search"
        lam_arr = concurrence_matrix(blocks, t) if blocks else np.zeros((t, t), dtype=int)
        rep = [int(lam_arr[i, i]) for i in range(t)]
        lam = [[0 if i == j else int(lam_arr[i, j]) for j in range(t)] for i in range(t)]
        extra = _greedy_blocks(t, k, n - len(blocks), lam, rep, gen)
        _swap_search(extra, lam, gen, proposals=min(60000, 400 * len(extra) * k))
        if not blocks:
            _connect(extra, lam, gen, t)
        blocks += extra

    _order_blocks(blocks, t, gen)

    lam_all = concurrence_matrix(blocks, t)
    replication = np.diag(lam_all)
    off = lam_all[~np.eye(t, dtype=bool)]
    pos = position_counts(blocks, t)
    carry = carryover_counts(blocks, t)
    balanced = bool(replication.min() == replication.max() and off.min() == off.max())
    eff = efficiency_factor(blocks, t)
    if not balanced:
        warnings.warn(
            f"no balanced incomplete block design of {n} panelists is known here for "
            f"t={t}, k={k}: replication {replication.min()}..{replication.max()}, "
            f"pair concurrences {off.min()}..{off.max()}, efficiency {eff:.4f} (a BIBD would reach "
            f"{t * (k - 1) / (k * (t - 1)):.4f})",
            UnbalancedPlanWarning,
            stacklevel=2,
        )
    return BlocksResult(
        samples=t,
        per_panelist=k,
        panelists=n,
        blocks=blocks,
        construction=construction,
        balanced=balanced,
        replication_min=int(replication.min()),
        replication_max=int(replication.max()),
        lambda_min=int(off.min()),
        lambda_max=int(off.max()),
        efficiency=round(eff, 12),
        efficiency_bound=t * (k - 1) / (k * (t - 1)),
        connected=eff > 0,
        position_min=int(pos.min()),
        position_max=int(pos.max()),
        carryover_max=int(carry.max()),
    )
