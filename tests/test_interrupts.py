"""Ctrl-C is never lost: a SIGINT whose KeyboardInterrupt a C callback drops (as numba's compiler
does through llvmlite's ctypes callbacks) is raised again at the next checkpoint.

Facts used: Python raises KeyboardInterrupt from its SIGINT handler, and an exception raised in a
ctypes callback is reported through ``sys.unraisablehook`` and not propagated (Python's ctypes
documentation, "Callback functions"; common practice)."""

from __future__ import annotations

import ctypes
import os
import signal
import sys

import pytest

from elucidate.interrupts import InterruptWatch


@ctypes.CFUNCTYPE(None)
def _signal_inside_a_c_callback() -> None:
    os.kill(os.getpid(), signal.SIGINT)
    for _ in range(10_000):  # Python runs its signal handler at a bytecode boundary in here
        pass


def test_a_dropped_sigint_is_quiet_and_raised_at_the_next_check():
    seen: list[object] = []
    hook = sys.unraisablehook
    mine = seen.append
    sys.unraisablehook = mine
    try:
        with InterruptWatch() as watch:
            _signal_inside_a_c_callback()  # the KeyboardInterrupt dies in the callback
            assert watch.noted
            with pytest.raises(KeyboardInterrupt):
                watch.check()
            with pytest.raises(KeyboardInterrupt):
                watch.checking(lambda stage, done, total: None)("generation", 1, None)
            with pytest.raises(KeyboardInterrupt):
                list(watch.each(["CCO"]))
        assert seen == []  # ours, so not reported as an ignored exception
        assert sys.unraisablehook is mine  # the caller's hook is back
    finally:
        sys.unraisablehook = hook
    assert signal.getsignal(signal.SIGINT) is signal.default_int_handler


def test_without_the_watch_the_callback_drops_the_interrupt():
    """The failure the watch is for: the interrupt is reported as ignored, and nothing raises."""
    seen: list[object] = []
    hook = sys.unraisablehook
    sys.unraisablehook = seen.append
    try:
        _signal_inside_a_c_callback()
    finally:
        sys.unraisablehook = hook
    assert [type(u.exc_value) for u in seen] == [KeyboardInterrupt]  # type: ignore[attr-defined]


def test_a_sigint_in_python_code_raises_at_once_and_nothing_is_noted_without_one():
    with InterruptWatch() as watch:
        watch.check()
        assert list(watch.each(["C", "CC"])) == ["C", "CC"]
        with pytest.raises(KeyboardInterrupt):
            os.kill(os.getpid(), signal.SIGINT)
            for _ in range(10_000):
                pass
        assert watch.noted


def test_another_handler_is_left_alone():
    def mine(signum, frame):
        return None

    previous = signal.signal(signal.SIGINT, mine)
    try:
        with InterruptWatch():
            assert signal.getsignal(signal.SIGINT) is mine
        assert signal.getsignal(signal.SIGINT) is mine
    finally:
        signal.signal(signal.SIGINT, previous)


def test_an_error_caused_by_the_interrupt_leaves_the_watch_as_the_interrupt():
    """C code that called back into Python may turn the KeyboardInterrupt into another error
    (numba reports a SystemError caused by it while unpickling its cached code): leaving the
    watch raises KeyboardInterrupt instead, so the command ends as interrupted (exit 130). An
    error with no interrupt behind it passes through unchanged."""
    with pytest.raises(KeyboardInterrupt) as caught, InterruptWatch():
        try:
            os.kill(os.getpid(), signal.SIGINT)
            for _ in range(10_000):
                pass
        except KeyboardInterrupt as exc:
            raise SystemError("returned a result with an exception set") from exc
    assert isinstance(caught.value.__cause__, SystemError)
    with pytest.raises(SystemError), InterruptWatch():
        raise SystemError("not ours")
