"""The leader gate's throttle (trials.gate): free tries, then doubling waits per key."""

from __future__ import annotations

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
