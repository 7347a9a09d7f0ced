"""A CSV file parsed in blocks on several threads at once, in bounded memory, blocks handed on in file order.

pyarrow's streaming reader (``pyarrow.csv.open_csv``) parses one block at a time (several threads within
a block), while its whole-file reader (``read_csv``) parses many blocks side by side. This reader cuts the
file's bytes into blocks that end at a line break, parses each on a pool of threads with ``read_csv``
(one thread per block, so the blocks run side by side; pyarrow releases the interpreter lock) and hands
the parsed blocks on in file order, holding at most ``workers + 1`` blocks. It is the quick route's
reader (items as 16-bit integers, values without line breaks): a block that fails to parse, or a value
holding a line break, makes the caller start the file again with pyarrow's own streaming reader.

Hand-written because pyarrow offers either parallel parsing of a whole file or streaming one block at a
time, not both.
"""
from __future__ import annotations

from collections import deque
from collections.abc import Iterator, Sequence
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Any

#: bytes of CSV text per block parsed on one thread (the memory is a few times this per thread)
PARALLEL_BLOCK_BYTES = 4 << 20


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


def _blocks_of_bytes(path: Path, block_bytes: int) -> Iterator[bytes]:
    """The file's data rows (the header line left out) in pieces of about ``block_bytes`` ending at a line feed."""
    with open(path, "rb") as handle:
        handle.readline()  # the header
        carry = b""
        while True:
            chunk = handle.read(block_bytes)
            if not chunk:
                break
            chunk = carry + chunk
            cut = chunk.rfind(b"\n")
            if cut < 0:
                carry = chunk
                continue
            carry = chunk[cut + 1:]
            yield chunk[: cut + 1]
        if carry:
            yield carry


def parallel_batches(path: Path, raw_names: Sequence[str], *, parse_options: Any, convert_options: Any,
                     block_bytes: int | None = None, workers: int = 2) -> Iterator[Any]:
    """Arrow record batches of the file, in order; each block parsed by ``pyarrow.csv.read_csv`` on a thread."""
    import pyarrow as pa
    import pyarrow.csv as pacsv

    block_bytes = block_bytes or PARALLEL_BLOCK_BYTES
    read_options = pacsv.ReadOptions(column_names=list(raw_names), use_threads=False,
                                     block_size=max(block_bytes * 2, 1 << 20))

    def parse(data: bytes) -> Any:
        return pacsv.read_csv(pa.py_buffer(data), read_options=read_options, parse_options=parse_options,
                              convert_options=convert_options).combine_chunks()

    with ThreadPoolExecutor(max_workers=workers) as pool:
        pending: deque = deque()
        try:
            for data in _blocks_of_bytes(path, block_bytes):
                pending.append(pool.submit(parse, data))
                del data
                while len(pending) > workers:
                    yield from pending.popleft().result().to_batches()
            while pending:
                yield from pending.popleft().result().to_batches()
        finally:
            for future in pending:
                future.cancel()
