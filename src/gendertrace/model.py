"""The data that crosses stage boundaries: input documents, parses, mentions, chains, evidence, findings.

Every stage of the pipeline reads and writes these plain dataclasses; none reaches into another stage's internals.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Literal

# The vocabularies live in gendertrace.vocab; these names stay importable from here.
from gendertrace.vocab import FINDING_KINDS, GENDERS, UD_GENDER, Gender, MentionKind  # noqa: F401

Side = Literal["source", "target"]


# ---------------------------------------------------------------------------------------------------------------
# Input


@dataclass(frozen=True)
class Segment:
    """One aligned translation unit: a source string, its machine translation, and an optional reference."""

    seg_id: str
    source: str
    target: str
    reference: str | None = None
    line: int = 0  # line (or record) number in the input file, for error messages


@dataclass(frozen=True)
class Document:
    """The segments of one document, in order."""

    doc_id: str
    segments: tuple[Segment, ...]
    origin: str = ""  # the file it came from


# ---------------------------------------------------------------------------------------------------------------
# Parses


@dataclass(frozen=True)
class Token:
    """A token of one segment, with UD morphology and a dependency arc inside the same segment.

    `head` is the index of the head token within the segment, or the token's own index for a sentence root.
    `deprel` is a UD relation in lower case (English ClearNLP labels are normalised by the parser layer).
    `start`/`end` are character offsets into the segment string (end exclusive).
    """

    i: int
    text: str
    lemma: str
    upos: str
    feats: Mapping[str, str]
    head: int
    deprel: str
    start: int
    end: int
    sent: int = 0
    ent: str = ""  # named-entity label; persons are "PER" whatever the pipeline calls them

    def feat(self, name: str) -> str | None:
        return self.feats.get(name)

    @property
    def finite(self) -> bool:
        """A finite verb form: VerbForm=Fin, or a Mood with no VerbForm (UD gives Mood to finite forms only,
        and some treebanks leave VerbForm off them)."""
        form = self.feats.get("VerbForm")
        return form == "Fin" or (form is None and "Mood" in self.feats)

    @property
    def participle(self) -> bool:
        """A participle: VerbForm=Part, or a verb with no VerbForm and no Mood that carries Gender or a past
        Tense (how some treebanks annotate Romance participles: "stata", "arrivato")."""
        form = self.feats.get("VerbForm")
        if form is not None:
            return form == "Part"
        return (self.upos in ("VERB", "AUX") and "Mood" not in self.feats
                and ("Gender" in self.feats or self.feats.get("Tense") == "Past"))

    @property
    def gender(self) -> str | None:
        """The token's UD Gender in the project's vocabulary, or None (also for Masc,Fem ambiguity)."""
        return UD_GENDER.get(self.feats.get("Gender", ""))

    @property
    def is_root(self) -> bool:
        return self.head == self.i


@dataclass(frozen=True)
class ParsedText:
    """One parsed segment side: its text and tokens."""

    text: str
    tokens: tuple[Token, ...]
    lang: str
    _children: tuple[tuple[int, ...], ...] = field(default=(), repr=False, compare=False)

    def __post_init__(self) -> None:
        kids: list[list[int]] = [[] for _ in self.tokens]
        for t in self.tokens:
            if not t.is_root and 0 <= t.head < len(self.tokens):
                kids[t.head].append(t.i)
        object.__setattr__(self, "_children", tuple(tuple(k) for k in kids))

    def children(self, i: int) -> list[Token]:
        return [self.tokens[j] for j in self._children[i]]

    def head_of(self, i: int) -> Token | None:
        t = self.tokens[i]
        return None if t.is_root else self.tokens[t.head]

    def subtree(self, i: int) -> list[int]:
        """Token indices of the subtree rooted at i, in order."""
        out, todo = [], [i]
        while todo:
            j = todo.pop()
            out.append(j)
            todo.extend(self._children[j])
        return sorted(out)


@dataclass(frozen=True)
class ParsedDocument:
    """A document with both sides parsed, one ParsedText per segment and side."""

    document: Document
    source: tuple[ParsedText, ...]
    target: tuple[ParsedText, ...]

    def side(self, side: Side) -> tuple[ParsedText, ...]:
        return self.source if side == "source" else self.target


# ---------------------------------------------------------------------------------------------------------------
# Mentions, evidence, chains


@dataclass(frozen=True, order=True)
class Span:
    """Characters [start, end) of one segment side: where a mention, an evidence item or a finding stands."""

    side: Side
    seg: int  # segment index in the document
    start: int
    end: int

    def overlaps(self, other: Span) -> bool:
        return (self.side, self.seg) == (other.side, other.seg) and self.start < other.end and other.start < self.end


@dataclass(frozen=True)
class EvidenceItem:
    """A located word (or words) that marks a gender on a mention, and how much it counts.

    kind: pronoun, morphology (determiner or noun inflection), agreement (adjective or participle agreeing with
    the person), lexical (an inherently gendered noun such as mother), title (an honorific), declared (from
    the entity sheet: side "source", located at the name it matched), first-name (weak, opt-in).
    """

    side: Side
    seg: int  # segment index in the document
    seg_id: str
    start: int
    end: int
    text: str
    gender: str
    kind: str
    weight: float
    rule: str  # which rule produced it, for explanations
    tokens: tuple[int, ...] = ()

    @property
    def span(self) -> Span:
        return Span(self.side, self.seg, self.start, self.end)


@dataclass(frozen=True)
class Mention:
    """A reference to a person on one side of one segment.

    For a zero subject (a finite verb with no overt subject in a pro-drop language) `head` is the clause head and
    the span covers the finite verb.
    """

    id: str
    side: Side
    seg: int
    head: int
    tokens: tuple[int, ...]
    kind: MentionKind
    text: str
    start: int
    end: int
    number: str | None = None  # "sing", "plur" or None
    person: str | None = None  # "1", "2", "3" or None
    pron_type: str | None = None  # personal, possessive, reflexive (pronouns only)
    role: str = ""  # dependency relation of the mention in its clause (nsubj, obj, nmod:poss...)
    clause: int = -1  # token index of the clause head the mention belongs to
    key: str = ""  # normalised lemma or name, for matching
    marks: tuple[EvidenceItem, ...] = ()
    sent: int = 0
    animate: bool = True  # False for pronouns that can also stand for things (it, lo, la)
    case: str | None = None  # pronouns: nom, acc, dat (from the rules), else None
    quoted: bool = False  # inside quotation marks
    # Set by coreference (coref.sieves): the chain, the mention a pronoun or zero subject was resolved to, and
    # how certain that attachment is (1.0 unless a choice was made); possessives read by their own form.
    chain: str = ""
    antecedent: str = ""
    certainty: float = 1.0
    read_by_form: bool = False

    @property
    def span(self) -> Span:
        return Span(self.side, self.seg, self.start, self.end)

    @property
    def gender(self) -> str | None:
        """The mention's own gender, when its marks agree."""
        gs = {m.gender for m in self.marks}
        return gs.pop() if len(gs) == 1 else None


@dataclass(frozen=True)
class Chain:
    """Mentions of one person on one side of a document, in text order."""

    id: str
    side: Side
    mentions: tuple[Mention, ...]


@dataclass(frozen=True)
class Link:
    """A cross-lingual link from a target mention to a source chain, with how it was found."""

    target_mention: str
    source_chain: str
    method: str  # name, lexicon, alignment, projection, chain
    confidence: float
    via: str = ""  # the source mention the link goes through (direct methods)


@dataclass(frozen=True)
class Entity:
    """One person in a document: a source chain, the target mentions linked to it, and the resolved gender."""

    id: str
    source_mentions: tuple[Mention, ...]
    target_mentions: tuple[Mention, ...]
    evidence: tuple[EvidenceItem, ...]
    gender: str | None
    confidence: float
    label: str = ""
    checked: int = 0  # gendered target references of this entity judged against the evidence
    consistent: int = 0  # of those, the ones that agree with it
    declared: tuple[str, ...] = ()  # genders the entity sheet accepts for the target forms, preferred first



# ---------------------------------------------------------------------------------------------------------------
# Results


@dataclass(frozen=True)
class Finding:
    """A target word that gives a person a gender the document's evidence does not support."""

    kind: str
    seg_id: str
    start: int
    end: int
    text: str
    expected: str | None
    found: str | None
    entity: str
    confidence: float
    evidence: tuple[EvidenceItem, ...]
    message: str = ""
    seg: int = 0
    mention: str = ""  # the target mention the word belongs to: its link is DocumentResult.links[mention]

    @property
    def span(self) -> Span:
        """Findings are about target words."""
        return Span("target", self.seg, self.start, self.end)


@dataclass(frozen=True)
class DocumentStats:
    """Sufficient statistics of one document, aggregated once over a corpus."""

    segments: int
    entities: int
    target_references: int  # gendered target words about a person
    checked: int  # of those, the ones the document's evidence can judge
    consistent: int  # of the checked, the ones that agree with it
    findings: Mapping[str, int]

    def to_json(self) -> dict:
        return {
            "segments": self.segments,
            "entities": self.entities,
            "target_references": self.target_references,
            "checked": self.checked,
            "consistent": self.consistent,
            "findings": dict(self.findings),
        }


@dataclass(frozen=True)
class DocumentResult:
    doc_id: str
    src_lang: str
    tgt_lang: str
    entities: tuple[Entity, ...]
    findings: tuple[Finding, ...]
    stats: DocumentStats
    chains: tuple[Chain, ...] = ()
    skipped: str = ""  # why the document was not scored, when it was not
    # Target mention id -> its link to a source chain (method, confidence, the source mention it goes through).
    links: Mapping[str, Link] = field(default_factory=dict, compare=False)
    # target mention id -> (segment index, start, end, text) of the source words the aligner pairs it with
    aligned: Mapping[str, tuple[int, int, int, str]] = field(default_factory=dict, compare=False)

    def to_json(self) -> dict:
        """The results line; the format is owned by gendertrace.results."""
        from gendertrace.results import document_json

        return document_json(self)
