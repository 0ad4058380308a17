"""The history store: scored runs per engine version, compared with confidence intervals and tests.

The command line lives in `gendertrace.history.cli` (`gendertrace history ...`); the pieces are:
`runs` (reading a results file into a RunData), `store` (the SQLAlchemy store), `stats` (intervals and tests),
`compare` (two runs side by side and the regression gate), `chart`, `export` and `demo`.
"""

from __future__ import annotations

import importlib

_EXPORTS = {"RunData": "runs", "load_run": "runs", "HistoryError": "store", "HistoryStore": "store"}
__all__ = sorted(_EXPORTS)


def __getattr__(name: str):
    # Loaded on first use, so that `gendertrace --help` does not import SQLAlchemy and numpy.
    if name in _EXPORTS:
        return getattr(importlib.import_module(f"gendertrace.history.{_EXPORTS[name]}"), name)
    raise AttributeError(f"module 'gendertrace.history' has no attribute {name!r}")
