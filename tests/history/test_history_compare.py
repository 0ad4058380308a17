"""Comparing two runs: refusals, the regression gate, the gender gap and the MT metrics."""

from __future__ import annotations

import pytest
from history_helpers import Person, document, simple_docs, write_input, write_results

from gendertrace.history.compare import compare_runs
from gendertrace.history.runs import load_run
from gendertrace.history.store import HistoryError, HistoryStore


@pytest.fixture
def store(tmp_path):
    with HistoryStore(tmp_path / "h.db") as s:
        yield s


def _record(store, tmp_path, version, docs, input_rows=None, **signature):
    results = write_results(tmp_path / f"r{version}.jsonl", docs, **signature)
    inp = write_input(tmp_path / f"r{version}.tsv", input_rows) if input_rows else None
    store.record(load_run(results, inp), "lumen", version)
    return store.load("lumen", version)


def _compare(store, a="1", b="2", **kw):
    return compare_runs(*store.load("lumen", a), *store.load("lumen", b), trials=2000, samples=500, **kw)


def test_runs_over_different_documents_are_refused_naming_the_missing_ones(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 2)] * 3))
    _record(store, tmp_path, "2", simple_docs([(1, 2)] * 2) + simple_docs([(1, 1)], prefix="x"))
    with pytest.raises(HistoryError, match=r"lumen:1 lacks 1: x000; lumen:2 lacks 1: d002"):
        _compare(store)


def test_runs_scored_with_other_rules_or_thresholds_are_refused_naming_each_difference(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 2)]))
    _record(store, tmp_path, "2", simple_docs([(1, 2)]), rules="ffffffffffff", min_confidence=0.7)
    with pytest.raises(HistoryError) as err:
        _compare(store)
    message = str(err.value)
    assert "min_confidence: 0.5 in lumen:1, 0.7 in lumen:2" in message
    assert "rules: '0a1b2c3d4e5f' in lumen:1, 'ffffffffffff' in lumen:2" in message
    assert "--force" in message


def test_a_forced_comparison_warns_at_the_top_of_the_report(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 2)]))
    _record(store, tmp_path, "2", simple_docs([(1, 2)]), tgt="en:spacy:en_model==2.0")
    result = _compare(store, force=True)
    text = result.render()
    assert result.differences == (("tgt", "en:spacy:en_model==1.0", "en:spacy:en_model==2.0"),)
    assert text.startswith("WARNING: the runs were scored with different settings")
    assert "tgt: 'en:spacy:en_model==1.0' in lumen:1, 'en:spacy:en_model==2.0' in lumen:2" in text


def test_only_the_input_differing_is_no_difference(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 2)]))
    _record(store, tmp_path, "2", simple_docs([(2, 2)]))  # its signature names another input file
    assert _compare(store).differences == ()


def test_a_large_significant_drop_is_a_regression(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(19, 20)] * 30))
    _record(store, tmp_path, "2", simple_docs([(15, 20)] * 30))
    result = _compare(store)
    assert result.delta == pytest.approx(-0.2)
    assert result.randomization.p_value < 0.05
    assert result.regressed(threshold=0.01)
    assert "gate: REGRESSION" in result.render()


def test_a_significant_drop_smaller_than_the_threshold_is_not_a_regression(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(200, 200)] * 40))
    _record(store, tmp_path, "2", simple_docs([(199, 200)] * 40))
    result = _compare(store)
    assert result.delta == pytest.approx(-0.005)
    assert result.randomization.p_value < 0.05
    assert not result.regressed(threshold=0.01)
    assert result.regressed(threshold=0.001)


def test_a_large_drop_on_too_little_data_is_not_a_regression(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(2, 2), (1, 2)]))
    _record(store, tmp_path, "2", simple_docs([(1, 2), (1, 2)]))
    result = _compare(store)
    assert result.delta == pytest.approx(-0.25)
    assert result.randomization.p_value >= 0.05
    assert not result.regressed()


def test_an_improvement_is_never_a_regression(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(10, 20)] * 20))
    _record(store, tmp_path, "2", simple_docs([(18, 20)] * 20))
    result = _compare(store)
    assert result.randomization.p_value < 0.05 and not result.regressed()


def test_rates_carry_wilson_and_bootstrap_intervals(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(81, 100), (0, 163)]))
    _record(store, tmp_path, "2", simple_docs([(81, 100), (0, 163)]))
    result = _compare(store)
    # 81/263 is Newcombe's first worked example (see test_history_stats for the source).
    assert (round(result.rate_a.wilson.low, 4), round(result.rate_a.wilson.high, 4)) == (0.2553, 0.3662)
    assert result.rate_a.bootstrap.interval.low < result.rate_a.wilson.low
    assert result.randomization.p_value == 1.0


def test_the_gap_compares_entities_by_the_gender_of_their_source_evidence(store, tmp_path):
    docs_a = [document(f"d{k}", [Person("fem", 5, 2), Person("masc", 5), Person(None, 3)]) for k in range(4)]
    docs_b = [document(f"d{k}", [Person("fem", 5, 1), Person("masc", 5, 1), Person(None, 3)])
              for k in range(4)]
    _record(store, tmp_path, "1", docs_a)
    _record(store, tmp_path, "2", docs_b)
    result = _compare(store)
    ga, gb = result.gap_a, result.gap_b
    assert (ga.fem_consistent, ga.fem_checked, ga.masc_consistent, ga.masc_checked) == (12, 20, 20, 20)
    assert ga.gap == pytest.approx(-0.4)
    assert gb.gap == pytest.approx(0.0)
    assert result.gap_change.low == pytest.approx(0.4) and result.gap_change.high == pytest.approx(0.4)
    assert "gap change B - A +0.400" in result.render()


def test_metrics_are_computed_only_when_both_runs_kept_texts(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 1)]))
    _record(store, tmp_path, "2", simple_docs([(1, 1)]))
    result = _compare(store)
    assert result.mt is None and "record both runs with --input" in result.mt_note


REFERENCE = "the red kite circles above the quiet valley"


def test_bleu_and_ter_match_values_worked_out_by_hand(store, tmp_path):
    # One substitution in eight words. BLEU (Papineni et al. 2002): precisions 7/8, 5/7, 3/6, 1/5 and no
    # brevity penalty, so the geometric mean is (1/16) ** (1/4) = 1/2: BLEU 50.00. TER (Snover et al. 2006):
    # one edit over eight reference words, 12.50. Worked out by hand for this invented sentence.
    _record(store, tmp_path, "1", simple_docs([(1, 1)]),
            [("d000", "1", "El milano rojo vuela sobre el valle.",
              "the red kite circles over the quiet valley", REFERENCE)])
    _record(store, tmp_path, "2", simple_docs([(1, 1)]),
            [("d000", "1", "El milano rojo vuela sobre el valle.", REFERENCE, REFERENCE)])
    result = _compare(store)
    scores = {m.name: m for m in result.mt.lines}
    assert scores["BLEU"].score_a == pytest.approx(50.0)
    assert scores["BLEU"].score_b == pytest.approx(100.0)
    assert scores["TER"].score_a == pytest.approx(12.5)
    assert scores["TER"].score_b == pytest.approx(0.0)
    assert "tok:13a" in scores["BLEU"].signature and "seed:13" in scores["BLEU"].signature
    text = result.render()
    assert "BLEU   A  50.00  B 100.00" in text
    assert "nrefs:1|bs:500|seed:13" in text


def test_chrf_matches_a_value_worked_out_by_hand(store, tmp_path):
    # chrF (Popović 2015) with character n-grams of order 1 to 6 and beta 2: "blusters" against "blustery"
    # shares 8 - n of the 9 - n n-grams of each order on both sides, so precision equals recall and the score
    # is the mean of 7/8, 6/7, 5/6, 4/5, 3/4 and 2/3: 79.70. Worked out by hand.
    _record(store, tmp_path, "1", simple_docs([(1, 1)]), [("d000", "1", "Ventoso.", "blusters", "blustery")])
    _record(store, tmp_path, "2", simple_docs([(1, 1)]), [("d000", "1", "Ventoso.", "blustery", "blustery")])
    scores = {m.name: m for m in _compare(store).mt.lines}
    assert round(scores["chrF2"].score_a, 2) == 79.70
    assert scores["chrF2"].score_b == pytest.approx(100.0)


def test_metrics_are_refused_when_the_references_differ(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(1, 1)]),
            [("d000", "1", "Salió.", "She left.", "She went out.")])
    _record(store, tmp_path, "2", simple_docs([(1, 1)]), [("d000", "1", "Salió.", "She left.", "She left.")])
    result = _compare(store)
    assert result.mt is None and "references differ between the runs in 1 segment" in result.mt_note


def test_the_comparison_is_reproducible_with_its_seed(store, tmp_path):
    _record(store, tmp_path, "1", simple_docs([(3, 5), (4, 4), (1, 3), (6, 7)]))
    _record(store, tmp_path, "2", simple_docs([(4, 5), (4, 4), (2, 3), (5, 7)]))
    first, again = _compare(store, seed=5), _compare(store, seed=5)
    assert first.render() == again.render()
    assert first.paired == again.paired and first.randomization == again.randomization
