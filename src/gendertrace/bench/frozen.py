"""A frozen word-alignment model for benchmark runs, so that two runs differ only by what was changed.

The default aligner samples, so two runs of the same rules can disagree on a few findings; a comparison of two
rule sets needs the same alignments on both sides. `frozen_aligner` reads a priors file, learning it first (one
sampled pass over the given parses) when the file does not exist yet.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from gendertrace.model import ParsedDocument
from gendertrace.pipeline import Scorer
from gendertrace.scale.priors import FrozenAligner, SampledAligner

__all__ = ["freeze_alignment"]


def freeze_alignment(scorer: Scorer, priors: str | Path, parsed: Sequence[ParsedDocument]) -> bool:
    """Make `scorer` align with the frozen model in `priors`; learn and write that file from `parsed` if missing.

    Returns True when the file was learned by this call.
    """
    priors = Path(priors)
    learned = False
    if not priors.is_file():
        learner = SampledAligner(learn=True)
        scorer.statistical_aligner = learner
        scorer.align(parsed)
        counts = learner.take_learned()
        if counts is None or not counts.sentences:
            raise ValueError(f"no alignment statistics learned for {priors}")
        counts.write(priors)
        learned = True
    scorer.statistical_aligner = FrozenAligner(str(priors))
    return learned
