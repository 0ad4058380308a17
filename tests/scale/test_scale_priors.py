"""Alignment statistics: learning them, eflomal priors files, priors for small batches, the frozen model."""

from __future__ import annotations

import eflomal
import pytest
from scale_helpers import parsed

from gendertrace.errors import InputError
from gendertrace.link.align import MIN_STATISTICAL, statistical_alignments
from gendertrace.scale.priors import FrozenAligner, PriorCounts, SampledAligner

# Invented toy sentences, space-separated as eflomal reads them.
SRC = ["la jueza llegó", "la jueza sonrió", "el enfermero llegó"]
TGT = ["the judge arrived", "the judge smiled", "the nurse arrived"]
FWD = ["0-0 1-1 2-2", "0-0 1-1 2-2", "0-0 1-1 2-2"]
REV = FWD


def _priors(tmp_path, lines: list[str]):
    path = tmp_path / "toy.priors"
    path.write_text("".join(line + "\n" for line in lines), encoding="utf-8")
    return path


def test_learned_counts_are_written_as_a_priors_file_eflomal_reads(tmp_path):
    counts = PriorCounts()
    counts.add_links(SRC[:2], TGT[:2], FWD[:2], REV[:2])
    more = PriorCounts()
    more.add_links(SRC[2:], TGT[2:], FWD[2:], REV[2:])
    counts.merge(more)
    path = tmp_path / "es-en.priors"
    counts.write(path)
    with open(path, encoding="utf-8") as f:
        lexical, *_ = eflomal.read_priors(f)
    pairs = {(s, t): a for s, t, a in lexical}
    assert pairs[("jueza", "judge")] == 2
    assert pairs[("llegó", "arrived")] == 2
    assert pairs[("enfermero", "nurse")] == 1
    assert counts.sentences == 3


def test_the_frozen_model_links_known_pairs_and_leaves_unknown_words(tmp_path):
    path = _priors(tmp_path, ["LEX\tla\tthe\t5", "LEX\tjueza\tjudge\t4", "LEX\tllegó\tarrived\t3"])
    aligner = FrozenAligner(str(path))
    links = aligner.align_pair(["la", "jueza", "nueva", "llegó"], ["the", "new", "judge", "arrived"])
    assert links == frozenset({(0, 0), (1, 2), (3, 3)})


def test_the_frozen_model_prefers_the_partner_nearer_the_diagonal(tmp_path):
    path = _priors(tmp_path, ["LEX\tla\tthe\t10"])
    links = FrozenAligner(str(path)).align_pair(["la", "x", "la", "y"], ["the", "z", "w", "the"])
    assert links == frozenset({(0, 0), (2, 3)})


def test_the_frozen_model_gives_the_same_links_whatever_else_is_in_the_batch(tmp_path):
    path = _priors(tmp_path, ["LEX\tla\tthe\t5", "LEX\tjueza\tjudge\t4"])
    aligner = FrozenAligner(str(path))
    alone = aligner([parsed("la jueza")], [parsed("the judge", "en")])
    among = aligner([parsed("el enfermero"), parsed("la jueza")], [parsed("the nurse", "en"),
                                                                    parsed("the judge", "en")])
    assert alone[0] == among[1] == frozenset({(0, 0), (1, 1)})


def test_a_priors_file_without_word_pairs_is_refused_for_the_frozen_model(tmp_path):
    with pytest.raises(InputError, match="no LEX lines"):
        FrozenAligner(str(_priors(tmp_path, ["HMMF\t1\t3"])))


def test_a_malformed_priors_line_names_its_line(tmp_path):
    with pytest.raises(InputError, match=r"toy\.priors:2"):
        FrozenAligner(str(_priors(tmp_path, ["LEX\tla\tthe\t5", "LEX\tla"])))


def test_without_priors_a_small_batch_gets_no_statistical_alignment():
    src = [parsed(s) for s in SRC]
    tgt = [parsed(t, "en") for t in TGT]
    assert len(src) < MIN_STATISTICAL
    assert statistical_alignments(src, tgt) is None


def test_with_priors_a_small_batch_is_aligned_and_its_links_can_be_learned(tmp_path):
    path = _priors(tmp_path, [f"LEX\t{s}\t{t}\t50" for s, t in [("la", "the"), ("jueza", "judge"),
                                                                 ("llegó", "arrived"), ("sonrió", "smiled")]])
    aligner = SampledAligner(priors=str(path), threads=1, learn=True)
    src = [parsed("la jueza llegó"), parsed("la jueza sonrió")]
    tgt = [parsed("the judge arrived", "en"), parsed("the judge smiled", "en")]
    links = aligner(src, tgt)
    assert links is not None and len(links) == 2
    learned = aligner.take_learned()
    assert learned.sentences == 2 and learned.lexical[("jueza", "judge")] == 2 - sum(
        (1, 1) not in one for one in links
    )
    assert aligner.take_learned().sentences == 0
    # Priors this strong fix the obvious pairs in nearly every draw: eflomal seeds its sampler from the operating
    # system, and one draw in a full test run once missed "jueza"/"judge", so a majority of three draws decides.
    draws = [links] + [aligner(src, tgt) for _ in range(2)]
    assert sum((1, 1) in d[0] and (2, 2) in d[1] for d in draws) >= 2


def test_with_priors_the_sampler_runs_a_shortened_schedule(tmp_path, monkeypatch):
    # The informed sampler's schedule is a fraction of eflomal's; the uninformed one keeps eflomal's own.
    from gendertrace.link import align

    seen = []
    real = eflomal.Aligner

    class Recording(real):
        def __init__(self, **kw):
            seen.append(kw)
            super().__init__(**kw)

    monkeypatch.setattr(eflomal, "Aligner", Recording)
    path = _priors(tmp_path, ["LEX\tla\tthe\t50", "LEX\tjueza\tjudge\t50"])
    src, tgt = [parsed("la jueza")], [parsed("the judge", "en")]
    assert statistical_alignments(src, tgt, priors=str(path)) is not None
    many_src, many_tgt = src * MIN_STATISTICAL, tgt * MIN_STATISTICAL
    assert statistical_alignments(many_src, many_tgt) is not None
    assert [kw["rel_iterations"] for kw in seen] == [align.PRIORS_REL_ITERATIONS, 1.0]
    assert 0 < align.PRIORS_REL_ITERATIONS < 1
