"""A CSV file parsed in blocks on several threads at once, in bounded memory, blocks handed on in file order.

pyarrow's streaming reader (``pyarrow.csv.open_csv``) parses one block at a time (several threads within
a block), while its whole-file reader (``read_csv``) parses many blocks side by side. This reader cuts the
file's bytes into blocks that end at a line break, parses each on a pool of threads with ``read_csv``
(one thread per block, so the blocks run side by side; pyarrow releases the interpreter lock) and hands
the parsed blocks on in file order, holding at most ``workers + 1`` blocks. It is the quick route's
reader (items as 16-bit integers, values without line breaks): a block that fails to parse, or a value
holding a line break, makes the caller start the file again with pyarrow's own streaming reader.

:meth:`ParallelBlocks.in_order` goes one step further: each block is parsed *and* worked (converted and
summarised) by the same thread, so a block is handed from thread to thread once instead of twice; a
block's first row number is handed on by the block before it once that one is parsed.

Hand-written because pyarrow offers either parallel parsing of a whole file or streaming one block at a
time, not both.
"""
from __future__ import annotations

from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Any, TypeVar

Result = TypeVar("Result")

#: bytes of CSV text per block parsed on one thread (the memory is a few times this per thread)
PARALLEL_BLOCK_BYTES = 8 << 20


class Retry(Exception):
    """The parse must start again another way (a value holds a line break a quick parse may split wrongly)."""


def can_cut(path: Path) -> bool:
    """Whether the file's rows can be cut at line feeds: its header ends in one (LF or CRLF, not a lone
    CR) outside quotes. A quote opens or closes a quoted name (a doubled quote inside one does both), so
    the first line feed ends the header exactly when the quotes before it are even in number; an odd
    number means a quoted name holds a line break."""
    with open(path, "rb") as handle:
        head = handle.read(1 << 16)
    end = head.find(b"\n")
    if end < 0:
        return False
    header = head[:end].rstrip(b"\r")
    return b"\r" not in header and header.count(b'"') % 2 == 0


def _blocks_of_bytes(path: Path, block_bytes: int) -> Iterator[memoryview]:
    """The file's data rows (the header line left out) in pieces of about ``block_bytes`` ending at a line feed.

    Each piece is a view of the bytes read (no copy); the part after its last line feed is read again
    with the next piece. A line longer than a piece makes the piece grow until it holds one.
    """
    with open(path, "rb") as handle:
        handle.readline()  # the header
        size = block_bytes
        while True:
            start = handle.tell()
            chunk = handle.read(size)
            if not chunk:
                break
            cut = chunk.rfind(b"\n")
            if cut < 0 and len(chunk) == size:  # no line feed yet: read a larger piece from the same place
                handle.seek(start)
                size *= 2
                continue
            end = len(chunk) if cut < 0 else cut + 1  # the file's last line may have no line feed
            handle.seek(start + end)
            size = block_bytes
            yield memoryview(chunk)[:end]


def parallel_batches(path: Path, raw_names: Sequence[str], *, parse_options: Any, convert_options: Any,
                     block_bytes: int | None = None, workers: int = 2) -> Iterator[Any]:
    """Arrow record batches of the file, in order; each block parsed by ``pyarrow.csv.read_csv`` on a thread."""
    return iter(ParallelBlocks(path, raw_names, parse_options=parse_options, convert_options=convert_options,
                               block_bytes=block_bytes, workers=workers))


class ParallelBlocks:
    """The file's blocks parsed on ``workers`` threads. Iterating gives the parsed record batches in file
    order; :meth:`in_order` parses and works each block on the same thread. ``check(batch)`` is called on
    every parsed batch (on the pool's thread) and may raise to stop the reading.

    ``quicker`` is (other convert options, ``holds(table)``): each block is parsed with those options
    first and kept when ``holds`` accepts the table; from the first block it refuses on, blocks are
    parsed with ``convert_options``."""

    def __init__(self, path: Path, raw_names: Sequence[str], *, parse_options: Any, convert_options: Any,
                 block_bytes: int | None = None, workers: int = 2,
                 check: Callable[[Any], None] | None = None,
                 quicker: tuple[Any, Callable[[Any], bool]] | None = None) -> None:
        import pyarrow.csv as pacsv

        self.path = path
        self.block_bytes = block_bytes or PARALLEL_BLOCK_BYTES
        self.workers = workers
        self._check = check
        self._parse_options, self._convert_options = parse_options, convert_options
        self._quicker = quicker
        self._read_options = pacsv.ReadOptions(column_names=list(raw_names), use_threads=False,
                                               block_size=max(self.block_bytes * 2, 1 << 20))

    def _parse(self, data: bytes | memoryview, convert_options: Any) -> Any:
        import pyarrow as pa
        import pyarrow.csv as pacsv

        return pacsv.read_csv(pa.py_buffer(data), read_options=self._read_options, parse_options=self._parse_options,
                              convert_options=convert_options).combine_chunks()

    def _batches(self, data: bytes | memoryview) -> list[Any]:
        table = None
        if self._quicker is not None:
            convert_options, holds = self._quicker
            table = self._parse(data, convert_options)
            if not holds(table):
                # this block and every later one parsed with the usual options: a file holding one such
                # cell tends to hold more, and a block parsed twice costs more than the quicker parse saves
                self._quicker, table = None, None
        if table is None:
            table = self._parse(data, self._convert_options)
        batches = table.to_batches()
        if self._check is not None:
            for batch in batches:
                self._check(batch)
        return batches

    def __iter__(self) -> Iterator[Any]:
        with ThreadPoolExecutor(max_workers=self.workers) as pool:
            yield from bounded_in_order((pool.submit(self._batches, data)
                                         for data in _blocks_of_bytes(self.path, self.block_bytes)), self.workers)

    def in_order(self, work: Callable[[Any, int], Result], first_row: int, *,
                 workers: int | None = None) -> Iterator[Result]:
        """``work(batch, row)`` of every batch, ``row`` being its first row number, yielded in file order;
        each block parsed and worked on one thread of ``workers`` (default: this reader's).

        A block's first row is where the block before it ends, known once that block is parsed: each
        block, once parsed, hands its end to the next (the blocks start in file order, so the one before
        is always parsed or being parsed, never waiting behind).
        """
        from concurrent.futures import Future

        from ..concurrency import one_blas_thread

        def parse_and_work(data: memoryview, starts: Future, ends: Future) -> list[Result]:
            try:
                batches = self._batches(data)
                row = starts.result()
                ends.set_result(row + sum(batch.num_rows for batch in batches))
            except BaseException as error:
                if not ends.done():
                    ends.set_exception(error)  # the next block stops too instead of waiting
                raise
            done = []
            for batch in batches:
                done.append(work(batch, row))
                row += batch.num_rows
            return done

        def submitted(pool: ThreadPoolExecutor) -> Iterator[Any]:
            previous: Future = Future()
            previous.set_result(first_row)
            for data in _blocks_of_bytes(self.path, self.block_bytes):
                ends: Future = Future()
                yield pool.submit(parse_and_work, data, previous, ends)
                previous = ends

        workers = workers or self.workers
        with one_blas_thread(), ThreadPoolExecutor(max_workers=workers) as pool:
            yield from bounded_in_order(submitted(pool), workers)


def bounded_in_order(futures: Iterator[Any], workers: int) -> Iterator[Any]:
    """The items of each future's list, in submission order, with at most ``workers`` futures waiting
    beside the one handed on (memory: a few blocks); queued work is cancelled when the consumer stops."""
    pending: deque = deque()
    try:
        for future in futures:
            pending.append(future)
            while len(pending) > workers:
                yield from pending.popleft().result()
        while pending:
            yield from pending.popleft().result()
    finally:
        for future in pending:
            future.cancel()
