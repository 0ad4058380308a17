"""The history store: scored runs per engine version, compared with confidence intervals and significance tests.

The command line lives in `gendertrace.history.cli` (`gendertrace history ...`); the pieces are:
`runs` (reading a results file into a RunData), `store` (the SQLAlchemy store), `stats` (intervals and tests),
`compare` (two runs side by side and the regression gate), `chart`, `export` and `demo`.
"""

from gendertrace.history.runs import RunData, load_run
from gendertrace.history.store import HistoryError, HistoryStore

__all__ = ["HistoryError", "HistoryStore", "RunData", "load_run"]
