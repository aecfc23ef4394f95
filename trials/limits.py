"""The largest requests the tool takes, so that a typo cannot run for minutes or fill
the memory. Each limit is far above what a tasting needs (common practice: panels of
tens to a few hundred, a handful of samples a sitting) and is refused at once past it.

The command line checks its arguments against these; the README lists them.
"""

from __future__ import annotations

MAX_PANELISTS = 10_000  # panelists in one design or plan
MAX_SAMPLES = 50  # samples in one serving-order design
MAX_CODES = 900  # three-digit blinding codes that exist ("100".."999")
MAX_N = 100_000  # answers in one exact binomial test or critical value
MIN_ALPHA = 1e-6  # the smallest risk a plan or a test takes
MAX_PORT = 65_535
MAX_BOOT = 10_000  # virtual panels in the bootstrap of a descriptive profile
