"""Exporting a table of the store (runs, documents, entities, findings, segments) as CSV or Parquet."""

from __future__ import annotations

from pathlib import Path

from gendertrace.history.store import HistoryError, HistoryStore
from gendertrace.io.csvwrite import write_csv_rows
from gendertrace.io.outputs import staged_file

TABLES: tuple[str, ...] = ("runs", "documents", "entities", "findings", "segments")


def write_export(store: HistoryStore, out: str | Path, table: str = "documents",
                 engine: str | None = None) -> int:
    """Write TABLE (each row named by its run's engine and version) to OUT; return the number of rows.

    The format follows the extension: .csv (written by `gendertrace.io.csvwrite`, so formula-like cells are
    defused), or .parquet (which needs pyarrow: `pip install gendertrace[parquet]`). OUT is written to a
    temporary file beside it and renamed into place when complete.
    """
    out = Path(out)
    suffix = out.suffix.lower()
    if suffix not in (".csv", ".parquet"):
        raise HistoryError(f"export file {out} must end in .csv or .parquet")
    if suffix == ".parquet":
        try:
            import pyarrow  # noqa: F401
        except ModuleNotFoundError as exc:
            raise HistoryError("Parquet export needs pyarrow: pip install 'gendertrace[parquet]'") from exc
    frame = store.table_frame(table, engine)
    with staged_file(out) as tmp:
        if suffix == ".csv":
            write_csv_rows(tmp, list(frame.columns), frame.itertuples(index=False, name=None))
        else:
            frame.to_parquet(tmp, index=False)
    return len(frame)
