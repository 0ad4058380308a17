"""Which words are person names on each side of a document, before mentions are extracted.

A side's recogniser labels persons; a proper noun matching a person name of the other side is a name too, and
where one side comes without a recogniser, a run of proper nouns standing word for word in both sides is one.
"""

from __future__ import annotations

from collections.abc import Sequence

from gendertrace.mentions.extract import name_key
from gendertrace.model import ParsedText


def recognises(parser) -> bool:
    """Whether a parser runs a named-entity recogniser (pre-parsed CoNLL-U input does not)."""
    return not parser.signature().startswith("conllu")


def person_names(parses: Sequence[ParsedText]) -> set[str]:
    """Names the NER tags as persons on one side: proper nouns matching them on the other side are names too."""
    out = set()
    for p in parses:
        run: list[str] = []
        for t in p.tokens + (None,):
            if t is not None and t.ent == "PER":
                run.append(t.text)
                continue
            if run:
                out.add(name_key(" ".join(run)))
                out.update(name_key(w) for w in run if len(w) > 2)
                run = []
    return out


def _proper_runs(parsed: ParsedText) -> list[list]:
    """Maximal runs of adjacent proper-noun tokens of one sentence."""
    runs, run = [], []
    for t in parsed.tokens + (None,):
        if t is not None and t.upos == "PROPN" and (not run or (run[-1].i == t.i - 1 and run[-1].sent == t.sent)):
            run.append(t)
            continue
        if run:
            runs.append(run)
        run = [t] if t is not None and t.upos == "PROPN" else []
    return runs


def shared_unlabelled_names(source: Sequence[ParsedText], target: Sequence[ParsedText],
                             src_recognises: bool = True, tgt_recognises: bool = True) -> set[str]:
    """Where one side comes without a named-entity recogniser (CoNLL-U input without entity labels), a run of
    two or more proper nouns that stands word for word in both sides of a segment pair and that the other side's
    recogniser labels as nothing (no place, no organisation) is taken for a person's name, and so are its words:
    recognisers miss rare names ("Dario Vell III") more often than they miss places and organisations. A side
    has labels where its parser recognises names or its input carries any entity label."""
    def labelled(parses: Sequence[ParsedText], recognises: bool) -> bool:
        return recognises or any(t.ent for p in parses for t in p.tokens)

    src_has, tgt_has = labelled(source, src_recognises), labelled(target, tgt_recognises)
    if src_has == tgt_has:
        return set()  # both sides recognise names (or neither does): their labels decide
    out = set()
    for s, t in zip(source, target, strict=True):
        with_ner, bare = (s, t) if src_has else (t, s)
        bare_runs = [[name_key(x.text) for x in run] for run in _proper_runs(bare) if len(run) > 1]
        for run in _proper_runs(with_ner):
            if len(run) < 2 or any(x.ent for x in run):
                continue
            words = [name_key(x.text) for x in run]
            for other in bare_runs:
                # The shorter run inside the longer one: taggers differ on a numeral or particle at the end
                # ("Dario Vell III" / "Dario Vell").
                short, long_ = sorted((words, other), key=len)
                if any(long_[k:k + len(short)] == short for k in range(len(long_) - len(short) + 1)):
                    out.add(" ".join(short))
                    out.update(w for w in short if len(w) > 2)
    return out

