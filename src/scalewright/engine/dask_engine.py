"""A Parquet dataset or a set of CSV files summarised partition by partition on Dask workers.

Each file of the dataset is one partition: a worker reads it block by block (:mod:`.stream`), so a
worker's memory does not grow with the size of its file either, and returns its mergeable summary; the
summaries are merged pairwise in a tree on the workers, and only the final one travels to the client.
Counts are whole numbers, so the result equals the single-machine one exactly. Dask and distributed
are imported only here, and only when ``--engine dask`` is asked for.
"""
from __future__ import annotations

import functools
import hashlib
from pathlib import Path
from typing import Any

from ..errors import DataError, Problem, UsageError
from ..summaries import Summary
from .plan import SummaryPlan
from .reading import ReadingOutcome

PARTITION_SUFFIXES = (".parquet", ".csv", ".tsv", ".txt")
GLOB_CHARACTERS = set("*?[")


def dataset_parts(data: str) -> tuple[list[str], bool]:
    """The partition files of ``data`` (a file, a folder, a glob or any fsspec URL), sorted, and whether
    they are on the local file system."""
    from fsspec.core import url_to_fs

    data = url_as_given(data)
    try:
        fs, root = url_to_fs(data)
    except (ImportError, ValueError) as error:
        raise UsageError(f"cannot open {data}: {error}") from None
    if GLOB_CHARACTERS & set(root):
        files = sorted(fs.glob(root))
    elif fs.isdir(root):
        files = sorted(path for path in fs.find(root) if Path(path).suffix.lower() in PARTITION_SUFFIXES)
    elif fs.exists(root):
        files = [root]
    else:
        raise DataError(Problem(file=data, message="data file or dataset not found"))
    files = [path for path in files if Path(path).suffix.lower() in PARTITION_SUFFIXES]
    if not files:
        raise DataError(Problem(file=data, message="no .parquet, .csv or .tsv files in this dataset"))
    kinds = {".parquet" if Path(path).suffix.lower() == ".parquet" else "delimited" for path in files}
    if len(kinds) > 1:
        raise DataError(Problem(file=data, message="the dataset mixes Parquet and delimited files; give one kind"))
    local = "file" in (fs.protocol if isinstance(fs.protocol, tuple) else (fs.protocol,))
    urls = files if local else [fs.unstrip_protocol(path) for path in files]
    if not local and kinds == {"delimited"}:
        raise UsageError("CSV partitions must be on a local or shared file system; use Parquet for other storage")
    return urls, local


def url_as_given(data: str) -> str:
    """``data`` with the second slash of its URL put back: the command line's path argument goes through
    pathlib, which reads ``s3://bucket/x`` as ``s3:/bucket/x`` (one letter before the colon is a drive)."""
    import re

    from fsspec.registry import known_implementations

    found = re.match(r"([A-Za-z][A-Za-z0-9+.-]+):/(?!/)", data)
    if found and found.group(1).lower() in known_implementations:
        return f"{data[:found.end()]}/{data[found.end():]}"
    return data


@functools.lru_cache(maxsize=4)
def _spec_from_text(text: str) -> Any:
    """The scale file's spec on a worker, from its text (the spec itself does not pickle)."""
    import tempfile

    from ..spec import load_spec

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "scales.yaml"
        path.write_text(text, encoding="utf-8")
        return load_spec(path)


def summarise_partition(url: str, part: int, scales_text: str, plan: SummaryPlan, local: bool) -> tuple[Summary, str]:
    """One partition's summary and the SHA-256 of its bytes (runs on a worker)."""
    from .blocks import CannotStream
    from .stream import summarise_file

    spec = _spec_from_text(scales_text)
    digest = hashlib.sha256()
    if local:
        with open(url, "rb") as handle:
            for chunk in iter(lambda: handle.read(1 << 20), b""):
                digest.update(chunk)
        try:
            return summarise_file(Path(url), spec, plan, file=url, part=part), digest.hexdigest()
        except CannotStream as reason:
            raise DataError(Problem(file=url, message=f"cannot be read in blocks ({reason}); read this file "
                                                      "alone with --engine memory to see why")) from None
    import fsspec

    with fsspec.open(url, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    with fsspec.open(url, "rb") as handle:
        try:
            return summarise_file(Path(url), spec, plan, source=handle, file=url, part=part), digest.hexdigest()
        except CannotStream as reason:
            raise DataError(Problem(file=url, message=f"cannot be read in blocks ({reason})")) from None


def _merge_pair(a: tuple[Summary, str], b: tuple[Summary, str]) -> tuple[Summary, str]:
    return a[0].merge(b[0]), ""


def _client(scheduler: str | None, workers: int | None):
    """A client of the given scheduler, or of a new local cluster (closed with the client)."""
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise UsageError('--engine dask needs Dask: pip install "scalewright[dask]"') from None
    if scheduler:
        return Client(scheduler), None
    from ..concurrency import worker_count

    # the dashboard on a free port: two runs at once on one machine would otherwise both ask for 8787
    cluster = LocalCluster(n_workers=workers or worker_count(), threads_per_worker=1, processes=True,
                           dashboard_address=":0")
    return Client(cluster), cluster


def dask_summary(data: str, spec: Any, plan: SummaryPlan, *, scheduler: str | None = None, lenient: bool = False,
                 workers: int | None = None) -> tuple[Summary, ReadingOutcome, dict[str, Any]]:
    """The merged summary of every partition, its checked reading, and the run's provenance
    (``data_sha256`` over the partitions' names and digests, ``scheduler``, ``partitions``)."""
    from .reading import check_reading

    urls, local = dataset_parts(data)
    scales_text = Path(spec.path).read_text(encoding="utf-8-sig")
    client, cluster = _client(scheduler, workers)
    try:
        futures = client.map(summarise_partition, urls, range(len(urls)), scales_text=scales_text, plan=plan,
                             local=local, pure=False)
        digests = client.gather([client.submit(lambda done: done[1], f, pure=False) for f in futures])
        while len(futures) > 1:  # a balanced tree of merges, on the workers
            futures = [client.submit(_merge_pair, futures[i], futures[i + 1], pure=False) if i + 1 < len(futures)
                       else futures[i] for i in range(0, len(futures), 2)]
        summary = futures[0].result()[0]
        address = client.scheduler.address if scheduler is None else scheduler
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    counts = summary["reading"]
    if counts.has_duplicate_ids():
        raise DataError(Problem(file=data, where=f"column {spec.id_column}",
                                message="an id appears more than once across the partitions; read the files "
                                        "together with --engine memory to list them"))
    outcome = check_reading(data, counts, spec, lenient=lenient)
    listing = "".join(f"{Path(url).name}\t{digest}\n" for url, digest in zip(urls, digests, strict=True))
    info = {"data_sha256": hashlib.sha256(listing.encode("utf-8")).hexdigest(),
            "scheduler": scheduler or "local", "partitions": len(urls), "address": address}
    return summary, outcome, info
