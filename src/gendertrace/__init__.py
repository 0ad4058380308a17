"""gendertrace: checks machine-translated documents for gender consistency.

Python API (the command line is built on it)::

    from gendertrace import Scorer, read_corpus
    scorer = Scorer("es", "en")
    for result in scorer.score(read_corpus("batch.tsv")):
        print(result.doc_id, result.stats.consistent, "/", result.stats.checked)
"""

__version__ = "0.1.0"

from gendertrace.pipeline import Scorer, ScoreSettings  # noqa: E402

__all__ = ["Scorer", "ScoreSettings", "__version__"]
