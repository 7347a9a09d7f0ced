"""Work in a forked process (concurrency.start_in_process): its result and its errors come back to the caller,
and the result is unpickled on the caller's thread, never on the executor's own thread (a child forked while
that thread imported a module would wait for the module's lock forever)."""
from __future__ import annotations

import threading

import numpy as np
import pytest

from scalewright.concurrency import ChildTraceback, start_in_process, worker_count
from scalewright.errors import DataError

UNPICKLED_ON: list[str] = []


class Recorder:
    """A result that notes the thread it is unpickled on."""

    def __init__(self, values: np.ndarray) -> None:
        self.values = values

    def __getstate__(self) -> dict:
        return {"values": self.values}

    def __setstate__(self, state: dict) -> None:
        UNPICKLED_ON.append(threading.current_thread().name)
        self.values = state["values"]


def _make(n: int) -> Recorder:
    return Recorder(np.arange(n, dtype=float) ** 2)


def _fails() -> None:
    raise DataError("a refused value in row 7")


needs_fork = pytest.mark.skipif(worker_count() <= 1, reason="one core: the work runs in this process")


@needs_fork
def test_the_result_comes_back_unpickled_on_the_callers_thread():
    UNPICKLED_ON.clear()
    waiting = start_in_process(lambda: _make(1000))
    found = waiting()
    np.testing.assert_array_equal(found.values, np.arange(1000, dtype=float) ** 2)  # reference: numpy itself
    assert UNPICKLED_ON == [threading.current_thread().name]


@needs_fork
def test_an_error_in_the_child_is_raised_by_the_caller_with_its_traceback():
    waiting = start_in_process(_fails)
    with pytest.raises(DataError, match="row 7") as raised:
        waiting()
    assert isinstance(raised.value.__cause__, ChildTraceback)
    assert "_fails" in str(raised.value.__cause__)
