"""Exporting a table of the store (runs, documents, entities, findings, segments) as CSV or Parquet."""

from __future__ import annotations

from pathlib import Path

from gendertrace.history.store import HistoryError, HistoryStore

TABLES: tuple[str, ...] = ("runs", "documents", "entities", "findings", "segments")


def write_export(store: HistoryStore, out: str | Path, table: str = "documents",
                 engine: str | None = None) -> int:
    """Write TABLE (each row named by its run's engine and version) to OUT; return the number of rows.

    The format follows the extension: .csv, or .parquet (which needs pyarrow:
    `pip install gendertrace[parquet]`).
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
    out.parent.mkdir(parents=True, exist_ok=True)
    if suffix == ".csv":
        frame.to_csv(out, index=False)
    else:
        frame.to_parquet(out, index=False)
    return len(frame)
