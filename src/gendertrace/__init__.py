"""gendertrace: checks machine-translated documents for gender consistency.

Python API (the command line is built on it)::

    from gendertrace import Scorer, read_corpus
    scorer = Scorer("es", "en")
    for result in scorer.score(read_corpus("batch.tsv")):
        print(result.doc_id, result.stats.consistent, "/", result.stats.checked)

`score_file` (what `gendertrace score` does) and `explain_document` are importable from here too; they load
the file-level machinery (streaming, worker processes) only when first used.
"""

from gendertrace._version import __version__
from gendertrace.io.readers import read_corpus
from gendertrace.pipeline import Scorer, ScoreSettings

__all__ = ["Scorer", "ScoreSettings", "__version__", "explain_document", "read_corpus", "score_file"]


def __getattr__(name: str):
    # The file-level API imports the streaming runner, which imports the scorer: loaded on first use.
    if name in ("score_file", "explain_document"):
        from gendertrace import api

        return getattr(api, name)
    raise AttributeError(f"module 'gendertrace' has no attribute {name!r}")
