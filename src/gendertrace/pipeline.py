"""The scoring pipeline: documents in, one DocumentResult per document out, in input order."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, field, replace
from functools import cached_property

from gendertrace import __version__
from gendertrace.coref.sieves import resolve_chains
from gendertrace.declared.apply import apply_declarations
from gendertrace.declared.policy import Policy
from gendertrace.declared.sheet import EntitySheet
from gendertrace.evidence.resolve import build_entities, dedupe
from gendertrace.findings.detect import detect_findings
from gendertrace.link.align import anchor_alignment, merge
from gendertrace.link.linker import link_mentions
from gendertrace.link.wordpairs import default_aligner
from gendertrace.mentions.extract import SINGULAR_THEY_RULE, extract_mentions, name_key, singular_they_ok
from gendertrace.model import Document, DocumentResult, ParsedDocument, ParsedText
from gendertrace.parse.base import Parser, get_parser
from gendertrace.parse.spacy_backend import expect_languages
from gendertrace.rules import LanguageRules, load_lexicon, load_rules, rules_digest


@dataclass
class ScoreSettings:
    """Everything that changes a score; recorded in the run signature."""

    min_confidence: float = 0.5
    batch_size: int = 2000  # documents whose segments are parsed and aligned together
    parser: str = "spacy"
    src_model: str | None = None
    tgt_model: str | None = None
    entity_sheet: EntitySheet | None = None  # declared pronouns and genders (docs/entities.md)
    policy: Policy = field(default_factory=Policy)


def pronoun_pairs(src: LanguageRules, tgt: LanguageRules) -> dict[tuple[str, str], float]:
    """Pronoun correspondences for the aligner, scored: same type is required and number must be compatible;
    equal case and equal gender score higher. Gender only ranks: a wrongly gendered pronoun still pairs."""
    pairs: dict[tuple[str, str], float] = {}
    for a, fa in src.pronouns.items():
        for b, fb in tgt.pronouns.items():
            best = None
            for x in fa:
                for y in fb:
                    if x.type != y.type or x.person != y.person or not (
                            x.number == y.number or None in (x.number, y.number)):
                        continue
                    # Object cases pair with each other: English "him" serves as both (objective case), and a
                    # dative clitic often translates as a direct object ("le permite" / "allowed him").
                    if x.case and y.case and x.case != y.case and {x.case, y.case} != {"acc", "dat"}:
                        continue
                    score = 1.0 + (0.5 if x.case and x.case == y.case else 0.0)
                    score += 1.0 if x.gender and x.gender == y.gender else 0.0
                    # A pronoun that stands only for persons pairs before a clitic that may stand for a thing
                    # ("la elegí a ella" / "I chose her": her is ella, the doubled clitic la is the same).
                    score -= 0.75 if x.animate is False or y.animate is False else 0.0
                    best = score if best is None else max(best, score)
            if best is not None:
                pairs[(a, b)] = best
    return pairs


class Scorer:
    """Scores translated documents for one language direction.

    Parsers default to the spaCy pipelines; pass `src_parser`/`tgt_parser` (e.g. a ConlluParser) to use
    pre-parsed input.
    """

    def __init__(
        self,
        src_lang: str,
        tgt_lang: str,
        settings: ScoreSettings | None = None,
        src_parser: Parser | None = None,
        tgt_parser: Parser | None = None,
    ) -> None:
        self.src_lang, self.tgt_lang = src_lang, tgt_lang
        self.settings = settings or ScoreSettings()
        self.src_rules = load_rules(src_lang)
        self.tgt_rules = load_rules(tgt_lang)
        self.lexicon = load_lexicon(src_lang, tgt_lang)
        self.pairs = pronoun_pairs(self.src_rules, self.tgt_rules)
        s = self.settings
        if s.parser == "spacy":
            expect_languages(side for side, given in (((src_lang, s.src_model), src_parser),
                                                      ((tgt_lang, s.tgt_model), tgt_parser)) if given is None)
        self.src_parser = src_parser or get_parser(src_lang, s.parser, s.src_model)
        self.tgt_parser = tgt_parser or get_parser(tgt_lang, s.parser, s.tgt_model)
        # Hook: the batch's statistical aligner, by default a fixed model that aligns each segment on its own
        # (deterministic); gendertrace.scale swaps in eflomal sampled per batch or a frozen model.
        self.statistical_aligner: Callable[[Sequence[ParsedText], Sequence[ParsedText]], list | None] = (
            default_aligner(src_lang, tgt_lang)
        )

    def signature(self) -> dict:
        return {
            "tool": f"gendertrace {__version__}",
            "rules": rules_digest(),
            "src": f"{self.src_lang}:{self.src_parser.signature()}",
            "tgt": f"{self.tgt_lang}:{self.tgt_parser.signature()}",
            "min_confidence": self.settings.min_confidence,
            "policy": self.settings.policy.to_json(),
            "entity_sheet": self.settings.entity_sheet.digest if self.settings.entity_sheet else None,
            "alignment": getattr(self.statistical_aligner, "label", "custom"),
        }

    def parse(self, docs: Sequence[Document]) -> list[ParsedDocument]:
        sources = self.src_parser.parse_many([s.source for d in docs for s in d.segments])
        targets = self.tgt_parser.parse_many([s.target for d in docs for s in d.segments])
        out, k = [], 0
        for d in docs:
            n = len(d.segments)
            out.append(ParsedDocument(d, tuple(sources[k:k + n]), tuple(targets[k:k + n])))
            k += n
        return out

    def score(
        self, docs: Iterable[Document], progress: Callable[[int], None] | None = None
    ) -> Iterator[DocumentResult]:
        """Score documents batch by batch, yielding results in input order."""
        batch: list[Document] = []
        for d in docs:
            batch.append(d)
            if len(batch) >= self.settings.batch_size:
                yield from self._score_batch(batch, progress)
                batch = []
        if batch:
            yield from self._score_batch(batch, progress)

    def _score_batch(self, docs, progress) -> Iterator[DocumentResult]:
        yield from self.score_parsed_batch(self.parse(docs), progress)

    def align(self, parsed: Sequence[ParsedDocument]) -> list[list]:
        """Word alignments of every segment of a batch: statistical over the batch, merged with anchors."""
        flat_src = [p for pd in parsed for p in pd.source]
        flat_tgt = [p for pd in parsed for p in pd.target]
        stat = self.statistical_aligner(flat_src, flat_tgt)
        out, k = [], 0
        for pd in parsed:
            aligns = []
            for j in range(len(pd.document.segments)):
                strong, weak = anchor_alignment(pd.source[j], pd.target[j], self.lexicon, self.pairs,
                                                self.src_rules, self.tgt_rules)
                aligns.append(merge(stat[k + j] if stat else None, strong, weak))
            k += len(pd.document.segments)
            out.append(aligns)
        return out

    def score_parsed_batch(
        self, parsed: Sequence[ParsedDocument], progress: Callable[[int], None] | None = None
    ) -> Iterator[DocumentResult]:
        """Score already parsed documents (aligned together as one batch), in order."""
        for pd, aligns in zip(parsed, self.align(parsed), strict=True):
            yield self.score_parsed(pd, aligns)
            if progress:
                progress(1)

    @cached_property
    def _recognisers(self) -> tuple[bool, bool]:
        """Whether the source and the target parser run a named-entity recogniser (asked once)."""
        return _recognises(self.src_parser), _recognises(self.tgt_parser)

    def score_parsed(self, pd: ParsedDocument, alignments) -> DocumentResult:
        """Score one parsed document given its per-segment word alignments."""
        doc = pd.document
        seg_ids = [s.seg_id for s in doc.segments]
        src_names = _person_names(pd.source)
        tgt_names = _person_names(pd.target)
        shared = _shared_unlabelled_names(pd.source, pd.target, *self._recognisers)
        src_names |= shared
        tgt_names |= shared
        sheet = self.settings.entity_sheet
        if sheet is not None:
            # Declared names count as names on both sides, whatever the NER says.
            src_names |= sheet.name_keys
            tgt_names |= sheet.name_keys
        src_mentions = [m for k, p in enumerate(pd.source)
                        for m in extract_mentions(p, k, seg_ids[k], "source", self.src_rules, tgt_names)]
        tgt_mentions = [m for k, p in enumerate(pd.target)
                        for m in extract_mentions(p, k, seg_ids[k], "target", self.tgt_rules, src_names)]
        # Gender agreement helps on the source, which is not being checked; it is off on the target.
        src_mentions, src_res = _chains_with_singular_they(src_mentions, pd.source, "source", True,
                                                           self.src_rules)
        tgt_mentions, tgt_res = _chains_with_singular_they(tgt_mentions, pd.target, "target", False,
                                                           self.tgt_rules)
        links = link_mentions(src_mentions, tgt_mentions, src_res, tgt_res, pd.source, pd.target, alignments,
                              self.lexicon)
        entities, _ = build_entities(src_res, tgt_res, tgt_mentions, links)
        if sheet is not None or self.settings.policy.first_names:
            entities = apply_declarations(entities, sheet, self.src_lang, self.tgt_lang, seg_ids,
                                          self.settings.policy.first_names)
        # Per source segment, the gender marks of its person mentions (clitics that may stand for things aside).
        segment_evidence: list[list] = [[] for _ in doc.segments]
        for m in src_mentions:
            if m.animate:
                segment_evidence[m.seg].extend(m.marks)
        segment_evidence = [list(dedupe(ev)) for ev in segment_evidence]
        findings, stats, per_entity = detect_findings(
            entities, links, [s.target for s in doc.segments], seg_ids, tgt_res.certainty,
            self.settings.min_confidence, tgt_res.chain_of, segment_evidence, self.settings.policy,
        )
        entities = [replace(e, checked=per_entity.get(e.id, (0, 0))[0], consistent=per_entity.get(e.id, (0, 0))[1])
                    for e in entities]
        return DocumentResult(doc.doc_id, self.src_lang, self.tgt_lang, tuple(entities), tuple(findings), stats,
                              tuple(src_res.chains) + tuple(tgt_res.chains))


def _chains_with_singular_they(mentions, parses, side, use_gender, rules):
    """Chains of one side; a 'they' stays a mention (of one person, neutral) only where its chain shows a
    singular antecedent, else it is plural they and leaves the chains are resolved again without it."""
    def resolve(ms):
        return resolve_chains(ms, parses, side, use_gender=use_gender, role_markers=rules.role_markers,
                              thing_pronouns=rules.thing_pronouns)

    res = resolve(mentions)
    candidates = [m for m in mentions if any(mk.rule == SINGULAR_THEY_RULE for mk in m.marks)]
    if not candidates:
        return mentions, res
    members: dict[str, list] = {}
    for c in res.chains:
        members[c.id] = list(c.mentions)
    drop = {m.id for m in candidates if not singular_they_ok(m, members.get(res.chain_of.get(m.id, ""), []),
                                                             list(parses))}
    if not drop:
        return mentions, res
    kept = [m for m in mentions if m.id not in drop]
    return kept, resolve(kept)


def _person_names(parses: Sequence[ParsedText]) -> set[str]:
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


def _recognises(parser) -> bool:
    """Whether a parser runs a named-entity recogniser (pre-parsed CoNLL-U input does not)."""
    return not parser.signature().startswith("conllu")


def _shared_unlabelled_names(source: Sequence[ParsedText], target: Sequence[ParsedText],
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

