"""The leader gate's throttle (trials.gate): free tries, then doubling waits per key."""

from __future__ import annotations

from trials import gate
from trials.gate import FREE_TRIES, MAX_WAIT, Throttle


class Clock:
    def __init__(self):
        self.now = 1000.0

    def __call__(self):
        return self.now


def test_the_first_wrong_passcodes_cost_nothing_then_each_wait_doubles():
    clock = Clock()
    gate = Throttle(clock=clock)
    for _ in range(FREE_TRIES - 1):
        gate.failed("session:a")
        assert gate.wait("session:a") == 0
    waits = []
    for _ in range(4):
        gate.failed("session:a")
        waits.append(gate.wait("session:a"))
        clock.now += waits[-1]  # the guesser waits it out
    assert waits == [2.0, 4.0, 8.0, 16.0]


def test_the_wait_is_capped_and_shared_by_the_address_across_sessions():
    clock = Clock()
    gate = Throttle(clock=clock)
    for _ in range(40):
        gate.failed("session:a", "address:10.0.0.9")
    assert gate.wait("session:a") == MAX_WAIT
    # a new tab from the same address inherits the address's wait
    assert gate.wait("session:b", "address:10.0.0.9") == MAX_WAIT
    clock.now += MAX_WAIT
    assert gate.wait("session:b", "address:10.0.0.9") == 0


def test_the_right_passcode_clears_the_keys_it_was_given_with():
    gate = Throttle(clock=Clock())
    for _ in range(FREE_TRIES + 2):
        gate.failed("session:a")
    gate.passed("session:a")
    assert gate.failures("session:a") == 0 and gate.wait("session:a") == 0


# ---------------------------------------------------------------- sign-in token

SECRET = b"s" * 32


def test_a_sign_in_token_reads_back_within_twelve_hours_and_not_after():
    made_at = 1_800_000_000.0
    token = gate.sign_in_token("rye", SECRET, "abc", clock=lambda: made_at)
    assert gate.read_sign_in(token, "rye", SECRET, clock=lambda: made_at + 11.9 * 3600) == "abc"
    assert gate.read_sign_in(token, "rye", SECRET, clock=lambda: made_at + 12.1 * 3600) is None


def test_a_sign_in_token_is_bound_to_the_passcode_and_the_server_secret():
    token = gate.sign_in_token("rye", SECRET, "abc")
    assert gate.read_sign_in(token, "rye", SECRET) == "abc"
    assert gate.read_sign_in(token, "caraway", SECRET) is None  # passcode changed
    assert gate.read_sign_in(token, "rye", b"t" * 32) is None  # another server's secret


def test_a_tampered_or_foreign_token_reads_as_nothing():
    token = gate.sign_in_token("rye", SECRET, "abc")
    # change the signature's first character: its last character may carry only
    # padding bits, so changing that one can leave the decoded signature the same
    head, _, sig = token.rpartition(".")
    flipped = f"{head}.{'A' if sig[0] != 'A' else 'B'}{sig[1:]}"
    body = token.split(".")[0]
    for bad in (flipped, "x" + token, body, "", "not a token", "a.b.c"):
        assert gate.read_sign_in(bad, "rye", SECRET) is None, bad


def test_a_sign_in_token_does_not_hold_the_passcode():
    import base64

    token = gate.sign_in_token("rye-and-caraway", SECRET, "abc")
    payload = token.split(".")[0]
    decoded = base64.urlsafe_b64decode(payload + "=" * (-len(payload) % 4))
    assert b"rye" not in decoded and "rye" not in token
