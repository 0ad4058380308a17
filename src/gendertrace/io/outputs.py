"""Writing outputs safely: never over one of the command's inputs, and only whole files.

What this module promises:

- `check_outputs` refuses, before anything is read or written, an output that is one of the inputs: the same
  resolved path (so `./in.tsv` and a symbolic link to it are caught) or the same file on disk (device and
  inode, so a hard link is caught too); two outputs naming one file are refused as well.
- `StagedOutputs` writes each output to a temporary file beside it (same folder, so the final rename never
  crosses file systems) and renames them all into place only when the command succeeded; when it fails, the
  temporary files are removed and the earlier outputs stay exactly as they were.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path

from gendertrace.errors import GendertraceError

PathLike = str | os.PathLike


class OutputError(GendertraceError):
    """An output that would overwrite an input, or that cannot be written."""


def _mode() -> int:
    # mkstemp makes its files private; an output gets the mode an ordinary new file would get.
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


_FILE_MODE = _mode()


def same_file(a: PathLike, b: PathLike) -> bool:
    """True when the two paths name one file: equal once resolved, or the same device and inode."""
    pa, pb = Path(a), Path(b)
    if pa.resolve() == pb.resolve():
        return True
    try:
        sa, sb = os.stat(pa), os.stat(pb)
    except OSError:
        return False  # one of them does not exist yet, so it cannot be the other
    return (sa.st_dev, sa.st_ino) == (sb.st_dev, sb.st_ino)


def check_outputs(outputs: Iterable[tuple[str, PathLike | None]],
                  inputs: Iterable[tuple[str, PathLike | None]]) -> None:
    """Refuse (OutputError) an output that is an input, or two outputs naming one file.

    Each item is (what the user called it, path), e.g. ("--out", "results.jsonl"); None paths are skipped.
    """
    outs = [(label, p) for label, p in outputs if p is not None]
    ins = [(label, p) for label, p in inputs if p is not None]
    for label, out in outs:
        for in_label, inp in ins:
            if same_file(out, inp):
                raise OutputError(f"{out}: the output {label} names an input, {in_label} ({inp}); nothing "
                                  f"written (an output never overwrites an input)")
    for k, (label, out) in enumerate(outs):
        for other_label, other in outs[k + 1:]:
            if same_file(out, other):
                raise OutputError(f"{out}: the outputs {label} and {other_label} name the same file; "
                                  f"nothing written")


def temporary_beside(path: PathLike) -> Path:
    """A new empty file in PATH's folder (made if missing), named after PATH and keeping its extension."""
    final = Path(path)
    try:
        final.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{final.name}.", suffix=f".tmp{final.suffix}", dir=final.parent)
    except OSError as exc:
        raise OutputError(f"{final}: cannot write: {exc.strerror}") from exc
    os.close(fd)
    os.chmod(tmp, _FILE_MODE)
    return Path(tmp)


def replace_into(tmp: PathLike, final: PathLike) -> None:
    """Rename a finished temporary file over its final name (atomic on one file system)."""
    try:
        os.replace(tmp, final)
    except OSError as exc:
        raise OutputError(f"{final}: cannot write: {exc.strerror}") from exc


class StagedOutputs:
    """Outputs written to temporary files and renamed into place together when the block succeeds.

        with StagedOutputs() as staged:
            write_report(staged.path("report.html"))
            write_csv(staged.path("findings.csv"))
    """

    def __init__(self) -> None:
        self._staged: list[tuple[Path, Path]] = []

    def path(self, final: PathLike) -> Path:
        """The temporary file to write instead of FINAL."""
        tmp = temporary_beside(final)
        self._staged.append((tmp, Path(final)))
        return tmp

    def write_text(self, final: PathLike, text: str) -> None:
        self.path(final).write_text(text, encoding="utf-8")

    def commit(self) -> None:
        for tmp, final in self._staged:
            replace_into(tmp, final)
        self._staged = []

    def discard(self) -> None:
        for tmp, _ in self._staged:
            tmp.unlink(missing_ok=True)
        self._staged = []

    def __enter__(self) -> StagedOutputs:
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        if exc_type is None:
            try:
                self.commit()
            finally:
                self.discard()
        else:
            self.discard()


@contextmanager
def staged_file(final: PathLike) -> Iterator[Path]:
    """One output written through a temporary file: `with staged_file(out) as tmp: write(tmp)`."""
    with StagedOutputs() as staged:
        yield staged.path(final)
