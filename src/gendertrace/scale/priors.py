"""Word-alignment statistics kept between runs: learned from eflomal's links, saved as an eflomal priors
file, and read back either as priors for eflomal's sampler or as a fixed (frozen) model that aligns
deterministically.

A priors file is eflomal's own text format (LEX, FERF, FERR, HMMF and HMMR lines of counts), so eflomal's
tools read it too. It is written in the vocabulary of `gendertrace.link.align.alignment_words`
(lower-cased tokens).
"""

from __future__ import annotations

import hashlib
import math
import os
import tempfile
from collections import Counter, defaultdict
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.link.align import Alignment, alignment_words, statistical_alignments, symmetrise
from gendertrace.model import ParsedText

# Frozen decoding: a word links to the partner that maximises association x closeness to the diagonal.
DIAGONAL_WEIGHT = 4.0  # how fast closeness decays with the difference of relative positions
MIN_ASSOCIATION = 0.02  # below this the pair is not linked (p(t|s) * p(s|t) of the learned counts)


@dataclass
class PriorCounts:
    """Alignment counts summed over batches: lexical pairs, jumps and fertilities, in both directions."""

    lexical: Counter = field(default_factory=Counter)
    jumps_fwd: Counter = field(default_factory=Counter)
    jumps_rev: Counter = field(default_factory=Counter)
    fertility_fwd: Counter = field(default_factory=Counter)
    fertility_rev: Counter = field(default_factory=Counter)
    sentences: int = 0

    def add_links(self, src: list[str], tgt: list[str], fwd: list[str], rev: list[str]) -> None:
        """Count one batch's eflomal links (space-joined words and `i-j` link lines, as eflomal writes)."""
        import eflomal

        n = min(len(src), len(tgt), len(fwd), len(rev))
        lex, hf, hr, ff, fr = eflomal.calculate_priors(src[:n], tgt[:n], fwd[:n], rev[:n])
        self.lexical.update(lex)
        self.jumps_fwd.update(hf)
        self.jumps_rev.update(hr)
        self.fertility_fwd.update(ff)
        self.fertility_rev.update(fr)
        self.sentences += n

    def merge(self, other: PriorCounts) -> None:
        self.lexical.update(other.lexical)
        self.jumps_fwd.update(other.jumps_fwd)
        self.jumps_rev.update(other.jumps_rev)
        self.fertility_fwd.update(other.fertility_fwd)
        self.fertility_rev.update(other.fertility_rev)
        self.sentences += other.sentences

    def write(self, path: str | Path) -> None:
        """Write the counts as an eflomal priors file, atomically (a reader never sees half a file)."""
        import eflomal

        path = Path(path)
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=path.name + ".", suffix=".part", dir=path.parent)
        try:
            with os.fdopen(fd, "w", encoding="utf-8") as f:
                eflomal.write_priors(f, self.lexical, self.jumps_fwd, self.jumps_rev, self.fertility_fwd,
                                     self.fertility_rev)
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise


def priors_digest(path: str | Path) -> str:
    """A short content digest of a priors file, for run signatures."""
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()[:12]


def read_lexical(path: str | Path) -> dict[tuple[str, str], float]:
    """The LEX counts of a priors file; other lines are checked for shape and skipped."""
    counts: dict[tuple[str, str], float] = {}
    with open(path, encoding="utf-8") as f:
        for lineno, line in enumerate(f, 1):
            fields = line.rstrip("\n").split("\t")
            if not line.strip():
                continue
            kind = fields[0]
            width = {"LEX": 4, "FERF": 4, "FERR": 4, "HMMF": 3, "HMMR": 3}.get(kind)
            if width is None or len(fields) != width:
                raise InputError(str(path), lineno, f"not an eflomal priors line: {line.strip()[:60]!r}")
            try:
                alpha = float(fields[-1])
            except ValueError as exc:
                raise InputError(str(path), lineno, f"count {fields[-1]!r} is not a number") from exc
            if kind == "LEX":
                counts[(fields[1], fields[2])] = counts.get((fields[1], fields[2]), 0.0) + alpha
    return counts


# ----------------------------------------------------------------------------------------------------
# Aligners the Scorer's hook accepts: callables (sources, targets) -> alignments or None


class SampledAligner:
    """eflomal trained on each batch, optionally informed by a priors file; can learn counts for a new one."""

    def __init__(self, priors: str | None = None, threads: int | None = None, learn: bool = False) -> None:
        self.priors = priors
        self.threads = threads
        self.learned: PriorCounts | None = PriorCounts() if learn else None
        digest = f", priors {priors_digest(priors)}" if priors else ""
        self.label = f"eflomal sampled per batch{digest}"

    def __call__(
        self, sources: Sequence[ParsedText], targets: Sequence[ParsedText]
    ) -> list[Alignment] | None:
        hook = self.learned.add_links if self.learned is not None else None
        return statistical_alignments(sources, targets, priors=self.priors, threads=self.threads,
                                      on_links=hook)

    def take_learned(self) -> PriorCounts | None:
        """The counts learned since the last call (None when not learning)."""
        if self.learned is None:
            return None
        out, self.learned = self.learned, PriorCounts()
        return out


class FrozenAligner:
    """A fixed model read from a priors file: each segment is aligned on its own, deterministically.

    Each target word links to the source word with the best association (p(t|s) * p(s|t) from the counts)
    times closeness to the diagonal, and each source word likewise to a target word; the two directions are
    then symmetrised like eflomal's. No sampling, and nothing depends on the other segments of the batch, so
    results do not depend on batch size, process or machine. Words the counts do not know are left to the
    anchors.
    """

    def __init__(self, priors: str) -> None:
        counts = read_lexical(priors)
        if not counts:
            raise InputError(priors, None, "no LEX lines: a frozen alignment model needs learned word pairs")
        src_total: dict[str, float] = defaultdict(float)
        tgt_total: dict[str, float] = defaultdict(float)
        for (s, t), c in counts.items():
            src_total[s] += c
            tgt_total[t] += c
        self.association = {(s, t): c * c / (src_total[s] * tgt_total[t]) for (s, t), c in counts.items()}
        self.label = f"frozen model from priors {priors_digest(priors)}"

    def __call__(self, sources: Sequence[ParsedText], targets: Sequence[ParsedText]) -> list[Alignment]:
        return [self.align_pair(alignment_words(s), alignment_words(t)) for s, t in zip(sources, targets,
                                                                                          strict=True)]

    def align_pair(self, src: list[str], tgt: list[str]) -> Alignment:
        ns, nt = max(len(src), 1), max(len(tgt), 1)
        assoc = self.association
        best_for_tgt: dict[int, tuple[float, int]] = {}
        best_for_src: dict[int, tuple[float, int]] = {}
        for i, s in enumerate(src):
            for j, t in enumerate(tgt):
                a = assoc.get((s, t))
                if a is None or a < MIN_ASSOCIATION:
                    continue
                score = a * math.exp(-DIAGONAL_WEIGHT * abs(i / ns - j / nt))
                # Ties go to the earlier word: strict ">" keeps the first best.
                if j not in best_for_tgt or score > best_for_tgt[j][0]:
                    best_for_tgt[j] = (score, i)
                if i not in best_for_src or score > best_for_src[i][0]:
                    best_for_src[i] = (score, j)
        fwd = {(i, j) for j, (_, i) in best_for_tgt.items()}
        rev = {(i, j) for i, (_, j) in best_for_src.items()}
        return symmetrise(fwd, rev)


def make_aligner(mode: str, priors: str | None, threads: int | None, learn: bool, src_lang: str = "",
                 tgt_lang: str = ""):
    """The aligner for a run: "fixed" (the default: the shipped word pairs of the language pair, each segment
    on its own), "sampled" (eflomal per batch, priors optional; random) or "frozen" (needs priors)."""
    if mode == "fixed":
        from gendertrace.link.wordpairs import WordPairAligner

        return WordPairAligner(src_lang, tgt_lang)
    if mode == "frozen":
        if not priors:
            raise ValueError("frozen alignment needs a priors file")
        return FrozenAligner(priors)
    if mode == "sampled":
        return SampledAligner(priors, threads, learn)
    raise ValueError(f"unknown alignment mode {mode!r} (expected 'fixed', 'sampled' or 'frozen')")


__all__ = ["FrozenAligner", "PriorCounts", "SampledAligner", "make_aligner", "priors_digest", "read_lexical"]
