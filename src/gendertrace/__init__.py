"""gendertrace: checks machine-translated documents for gender consistency.

Python API (the command line is built on it)::

    from gendertrace import Scorer, read_corpus
    scorer = Scorer("es", "en")
    for result in scorer.score(read_corpus("batch.tsv")):
        print(result.doc_id, result.stats.consistent, "/", result.stats.checked)

`score_file` (what `gendertrace score` does) and `explain_document` are importable from here too.
"""

from gendertrace._version import __version__

__all__ = ["Scorer", "ScoreSettings", "__version__", "explain_document", "read_corpus", "score_file"]

# Loaded on first use: the scorer reads the rules' weights file, and a bad one is reported by the command
# that needs it (one line), not by importing the package.
_LAZY = {"Scorer": "gendertrace.pipeline", "ScoreSettings": "gendertrace.pipeline",
         "read_corpus": "gendertrace.io.readers", "score_file": "gendertrace.api",
         "explain_document": "gendertrace.api"}


def __getattr__(name: str):
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'gendertrace' has no attribute {name!r}")
