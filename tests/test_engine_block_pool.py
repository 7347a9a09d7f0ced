"""The block pool hands results on in file order, with the right first row, holding a bounded number."""
import threading
import time
from dataclasses import dataclass

import pytest

from scalewright.engine.block_pool import in_file_order


@dataclass
class FakeBatch:
    label: int
    num_rows: int


def test_results_come_in_file_order_with_each_batch_first_row():
    batches = [FakeBatch(label, rows) for label, rows in enumerate([5, 1, 7, 3, 2, 8])]

    def work(batch, row):
        time.sleep(0.02 if batch.label % 2 == 0 else 0.0)  # the even blocks finish last
        return batch.label, row

    out = list(in_file_order(batches, work, 2, workers=2))
    assert [label for label, _ in out] == [0, 1, 2, 3, 4, 5]
    # first row numbers: 2, then each previous start plus its rows (the data file's own numbering)
    assert [row for _, row in out] == [2, 7, 8, 15, 18, 20]


def test_at_most_workers_plus_one_blocks_are_taken_ahead_of_the_consumer():
    taken = []

    def batches():
        for label in range(20):
            taken.append(label)
            yield FakeBatch(label, 1)

    results = in_file_order(batches(), lambda batch, row: batch.label, 1, workers=2)
    assert next(results) == 0
    # the pool holds two blocks in flight beside the one handed on: no more of the file is read ahead
    assert len(taken) <= 3


def test_an_error_in_one_block_reaches_the_consumer_and_stops_the_rest():
    started = []
    lock = threading.Lock()

    def work(batch, row):
        with lock:
            started.append(batch.label)
        if batch.label == 1:
            raise ValueError("block 1 is broken")
        return batch.label

    with pytest.raises(ValueError, match="block 1"):
        list(in_file_order((FakeBatch(i, 1) for i in range(50)), work, 1, workers=2))
    assert len(started) < 50
