"""The leader gate's rules, apart from the screen: a throttle on wrong passcodes.
Pure: a clock is passed in, nothing is stored but in the object itself.

Throttle (common practice against guessing): the first few wrong passcodes cost
nothing; from then on each further try must wait twice as long as the last, up to
:data:`MAX_WAIT` seconds, counted per client address and per browser session, so a
new tab does not reset it. While a wait runs, no passcode is checked, the right one
included.
"""

from __future__ import annotations

import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, field

FREE_TRIES = 3
MAX_WAIT = 300.0  # seconds


@dataclass
class Throttle:
    """Wrong passcodes per key (a client address, a browser session)."""

    clock: Callable[[], float] = time.monotonic
    _failures: dict[str, tuple[int, float]] = field(default_factory=dict)
    _lock: threading.Lock = field(default_factory=threading.Lock)

    def wait(self, *keys: str) -> float:
        """Seconds before the next try is checked (0: now), the longest over ``keys``."""
        now = self.clock()
        with self._lock:
            longest = 0.0
            for key in keys:
                count, last = self._failures.get(key, (0, 0.0))
                if count >= FREE_TRIES:
                    pause = min(MAX_WAIT, 2.0 ** (count - FREE_TRIES + 1))
                    longest = max(longest, last + pause - now)
            return max(0.0, longest)

    def failed(self, *keys: str) -> None:
        now = self.clock()
        with self._lock:
            for key in keys:
                count, _ = self._failures.get(key, (0, 0.0))
                self._failures[key] = (count + 1, now)

    def passed(self, *keys: str) -> None:
        with self._lock:
            for key in keys:
                self._failures.pop(key, None)

    def failures(self, key: str) -> int:
        return self._failures.get(key, (0, 0.0))[0]

