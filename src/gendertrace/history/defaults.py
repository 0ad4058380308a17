"""Defaults shared by the comparison and the command line (kept apart so the command line starts fast)."""

DEFAULT_THRESHOLD = 0.01  # smallest drop of the rate (absolute) that the gate counts as a regression
DEFAULT_ALPHA = 0.05
DEFAULT_SAMPLES = 1000
DEFAULT_TRIALS = 10000
DEFAULT_SEED = 13
FEW_DOCUMENTS = 10  # below this many documents the report says its resampling statistics are coarse
DEFAULT_DB = ".gendertrace/history.db"
