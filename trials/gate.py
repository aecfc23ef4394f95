"""The leader gate's rules, apart from the screen: a throttle on wrong passcodes.
Pure: a clock is passed in, nothing is stored but in the object itself.

Throttle (common practice against guessing): the first few wrong passcodes cost
nothing; from then on each further try must wait twice as long as the last, up to
:data:`MAX_WAIT` seconds, counted per client address and per browser session, so a
new tab does not reset it. While a wait runs, no passcode is checked, the right one
included.

Sign-in token: once the passcode is accepted the browser keeps a signed, expiring token
(itsdangerous, keyed on the passcode and the server's secret) in a cookie, so a reload does
not ask again for :data:`SIGN_IN_SECONDS`.
"""

from __future__ import annotations

import functools
import hashlib
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



# ---------------------------------------------------------------- staying signed in

SIGN_IN_SECONDS = 12 * 3600  # a leader stays signed in across reloads for 12 hours
COOKIE = "kt_leader"
_SALT = "kitchen-trials leader sign-in"


@functools.lru_cache(maxsize=8)
def _signing_key(passcode: str, secret: bytes) -> bytes:
    """The key that signs sign-in tokens: derived from the configured passcode (so a new
    passcode signs everyone out) and the server's secret, stretched so that a copied token
    is no quick way to guess the passcode offline."""
    return hashlib.pbkdf2_hmac("sha256", passcode.encode("utf-8"), _SALT.encode() + secret,
                               100_000)


def _serializer(passcode: str, secret: bytes, clock: Callable[[], float]):
    from itsdangerous import TimestampSigner, URLSafeTimedSerializer

    class _Signer(TimestampSigner):
        def get_timestamp(self) -> int:
            return int(clock())

    return URLSafeTimedSerializer(_signing_key(passcode, secret), salt=_SALT, signer=_Signer)


def sign_in_token(passcode: str, secret: bytes, sign_in: str, *,
                  clock: Callable[[], float] = time.time) -> str:
    """A signed, timestamped token naming one sign-in (``sign_in``, a random id); it holds
    neither the passcode nor anything derived from it but the signature."""
    return _serializer(passcode, secret, clock).dumps({"sign_in": sign_in})


def read_sign_in(token: str, passcode: str, secret: bytes, *,
                 max_age: float = SIGN_IN_SECONDS,
                 clock: Callable[[], float] = time.time) -> str | None:
    """The sign-in id of a token made by :func:`sign_in_token` with this passcode and
    secret no more than ``max_age`` seconds ago; None for any other token (tampered,
    expired, made with another passcode, or not a token at all)."""
    from itsdangerous import BadData

    try:
        data = _serializer(passcode, secret, clock).loads(token, max_age=max_age)
    except BadData:
        return None
    sign_in = data.get("sign_in") if isinstance(data, dict) else None
    return sign_in if isinstance(sign_in, str) and sign_in else None
