"""Writing outputs safely: atomically, and never over an input file."""
from __future__ import annotations

import hashlib
import os
import stat
import tempfile
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from .errors import UsageError


def sha256_of(path: str | os.PathLike[str]) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def refuse_input_overwrite(target: str | os.PathLike[str], inputs: Iterable[str | os.PathLike[str] | None]) -> None:
    """Raise ``UsageError`` when ``target`` is one of the input files (also through links); an input given
    as None (an option not given) is passed over."""
    target_path = Path(target)
    for source in inputs:
        if source is None:
            continue
        source_path = Path(source)
        if target_path.exists() and source_path.exists() and os.path.samefile(target_path, source_path):
            raise UsageError(f"refusing to write {target}: it is an input file")
        if target_path.resolve() == source_path.resolve():
            raise UsageError(f"refusing to write {target}: it is an input file")


def write_atomic(
    target: str | os.PathLike[str],
    content: str | bytes,
    *,
    inputs: Iterable[str | os.PathLike[str] | None] = (),
) -> Path:
    """Write ``content`` to ``target`` through a temporary file in the same folder and a rename."""
    data = content.encode("utf-8") if isinstance(content, str) else content
    return write_atomic_with(target, lambda temp: temp.write_bytes(data), inputs=inputs)


def prepare_output_folder(folder: str | os.PathLike[str], *, what: str, force: bool = False) -> Path:
    """Create ``folder`` if needed; refuse a file, and a folder that already holds files unless ``force``."""
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise UsageError(f"cannot write the {what} into {folder}: it is a file, not a folder")
    if folder.is_dir() and any(folder.iterdir()) and not force:
        raise UsageError(f"refusing to write the {what} into {folder}: the folder is not empty "
                         "(use --force to write into it anyway)")
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def write_atomic_with(target: str | os.PathLike[str], writer, *, inputs: Iterable = ()) -> Path:
    """Like ``write_atomic`` for libraries that write to a path themselves: ``writer(temp_path)``."""
    target_path = Path(target)
    refuse_input_overwrite(target_path, inputs)
    folder = target_path.parent if str(target_path.parent) else Path(".")
    if not folder.is_dir():
        raise UsageError(f"cannot write {target}: folder {folder} does not exist")
    handle, temp_name = tempfile.mkstemp(prefix=f".{target_path.name}.", suffix=target_path.suffix, dir=folder)
    os.close(handle)
    try:
        writer(Path(temp_name))
        # mkstemp makes the file private (600); the finished file gets the mode any program would give it
        os.chmod(temp_name, _mode_for(target_path))
        os.replace(temp_name, target_path)
    except BaseException:
        if os.path.exists(temp_name):
            os.unlink(temp_name)
        raise
    return target_path


def current_umask() -> int:
    """The process's umask, read without changing it where the system allows (Linux), else set and restored."""
    try:
        with open("/proc/self/status", encoding="ascii") as status:
            for line in status:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _mode_for(target: Path) -> int:
    """Permission bits of a file written to ``target``: those of the file it replaces, else 666 less the umask."""
    try:
        return stat.S_IMODE(target.stat().st_mode)
    except OSError:
        return 0o666 & ~current_umask()


def neutralise_formula(value: Any) -> Any:
    """Prefix text cells that a spreadsheet would run as a formula (=, +, -, @, tab, CR) with an apostrophe."""
    if isinstance(value, str) and value[:1] in ("=", "+", "-", "@", "\t", "\r"):
        return "'" + value
    return value
