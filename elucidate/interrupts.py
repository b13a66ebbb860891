"""Ctrl-C that is never lost during a long command.

Python turns SIGINT into :class:`KeyboardInterrupt` in whatever Python code runs next. When that
code is a callback from C (numba compiles through llvmlite, which calls back into Python through
ctypes), the exception cannot travel up: Python prints it as "Exception ignored" and drops it,
and the command went on to the end as if nothing had been asked. :class:`InterruptWatch` notes
each SIGINT before raising it, keeps a dropped one quiet, and raises it again at the next
checkpoint: :meth:`InterruptWatch.check`, every call of a progress function wrapped by
:meth:`InterruptWatch.checking`, or every item of an iterable wrapped by
:meth:`InterruptWatch.each`. When C code that called back into Python turns the interrupt into
another error instead (numba, unpickling its cached compiled code, reports a SystemError caused
by it), the watch raises :class:`KeyboardInterrupt` in its place as it is left.
"""

from __future__ import annotations

import signal
import sys
import threading
from collections.abc import Iterable, Iterator
from types import FrameType, TracebackType
from typing import Any

from .progress import Progress

__all__ = ["InterruptWatch"]


class InterruptWatch:
    """While entered (in the main thread, with Python's own SIGINT handler in place), SIGINT is
    noted before it is raised, and a dropped one is raised again at the next check."""

    def __init__(self) -> None:
        self.noted = False
        self._installed = False
        self._previous_hook: Any = None

    def __enter__(self) -> InterruptWatch:
        if threading.current_thread() is threading.main_thread() and (
            signal.getsignal(signal.SIGINT) is signal.default_int_handler
        ):
            signal.signal(signal.SIGINT, self._on_signal)
            self._previous_hook = sys.unraisablehook
            sys.unraisablehook = self._on_unraisable
            self._installed = True
        return self

    def __exit__(
        self, kind: type[BaseException] | None, value: BaseException | None, traceback: TracebackType | None
    ) -> None:
        if self._installed:
            signal.signal(signal.SIGINT, signal.default_int_handler)
            sys.unraisablehook = self._previous_hook
            self._installed = False
        if (
            self.noted
            and value is not None
            and not isinstance(value, KeyboardInterrupt)
            and _caused_by_interrupt(value)
        ):
            raise KeyboardInterrupt from value

    def _on_signal(self, signum: int, frame: FrameType | None) -> None:
        self.noted = True
        raise KeyboardInterrupt

    def _on_unraisable(self, unraisable: Any) -> None:
        if self.noted and isinstance(unraisable.exc_value, KeyboardInterrupt):
            return  # ours, dropped by a C callback: check() raises it again
        self._previous_hook(unraisable)

    def check(self) -> None:
        """Raise :class:`KeyboardInterrupt` if SIGINT came while entered (once handled, it
        stays noted: the command is ending)."""
        if self.noted:
            raise KeyboardInterrupt

    def checking(self, progress: Progress) -> Progress:
        """``progress``, checking for a noted SIGINT first on every call."""

        def checked(stage: str, done: int, total: int | None) -> None:
            self.check()
            progress(stage, done, total)

        return checked

    def each(self, items: Iterable[str]) -> Iterator[str]:
        """``items``, checking for a noted SIGINT before each."""
        for item in items:
            self.check()
            yield item


def _caused_by_interrupt(error: BaseException) -> bool:
    """Whether a KeyboardInterrupt is among the causes and contexts of ``error``."""
    seen: set[int] = set()
    todo: list[BaseException] = [error]
    while todo:
        current = todo.pop()
        if id(current) in seen:
            continue
        seen.add(id(current))
        if isinstance(current, KeyboardInterrupt):
            return True
        todo += [e for e in (current.__cause__, current.__context__) if e is not None]
    return False
