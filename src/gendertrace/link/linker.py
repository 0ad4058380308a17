"""Cross-lingual links: each target mention to the source chain of the person it refers to.

Methods, most certain first (`DIRECT_METHODS`, tried per target mention until one links it): names by string
identity, role nouns through the bilingual lexicon, word alignment of the mention itself, subject-verb projection
(a target subject links to the overt or zero subject of the aligned source clause; this is what carries pro-drop
sources). Then `CHAIN_METHODS` work on the whole target chain: a name speaks for the nouns joined to it by
structure, and mentions no direct method reached inherit through their chain. A new method is one function and
one line in its list.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

from gendertrace.coref.sieves import Resolution
from gendertrace.link.align import Alignment
from gendertrace.model import Link, Mention, ParsedText
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import CLAUSE_FUNCTION_RELS, SUBJECT_RELS, LinkMethod, MentionKind

# Confidence by link method: rules/scoring/weights.yaml, section "links".
CONF_NAME = WEIGHTS.links.name
CONF_PARTIAL_NAME = WEIGHTS.links.partial_name
CONF_LEXICON = WEIGHTS.links.lexicon
CONF_ALIGNED = WEIGHTS.links.alignment
CONF_PROJECTED = WEIGHTS.links.projection
CONF_CHAIN = WEIGHTS.links.chain


def _clause_of(parsed: ParsedText, i: int) -> int:
    """The clause head a token belongs to as a verb: auxiliaries and copulas stand for their head."""
    t = parsed.tokens[i]
    return t.head if t.deprel in CLAUSE_FUNCTION_RELS and not t.is_root else i


@dataclass
class LinkContext:
    """What the link methods read: both sides' resolved mentions (chain and certainty set) in extraction order,
    their parses, the word alignments and the lexicon, with the indexes the methods share."""

    src_mentions: Sequence[Mention]
    tgt_mentions: Sequence[Mention]
    src_parses: Sequence[ParsedText]
    tgt_parses: Sequence[ParsedText]
    alignments: Sequence[Alignment]
    lexicon: dict[str, frozenset[str]]
    by_token: dict[tuple[int, int], Mention] = field(default_factory=dict)  # overt source mention per word
    subject_of: dict[tuple[int, int], Mention] = field(default_factory=dict)  # source subject per clause
    tgt_subjects: dict[tuple[int, int], list[Mention]] = field(default_factory=dict)  # target subjects per clause
    src_names: list[Mention] = field(default_factory=list)
    src_by_id: dict[str, Mention] = field(default_factory=dict)

    def __post_init__(self) -> None:
        for m in self.src_mentions:
            if m.kind != MentionKind.ZERO:
                for t in m.tokens:
                    self.by_token[(m.seg, t)] = m
            if m.role in SUBJECT_RELS and m.pron_type != "possessive" and m.clause >= 0:
                # Overt subjects win over a zero subject of the same clause (there should be none, but parses
                # vary).
                key = (m.seg, m.clause)
                if key not in self.subject_of or self.subject_of[key].kind == MentionKind.ZERO:
                    self.subject_of[key] = m
        self.src_names = [m for m in self.src_mentions if m.kind == MentionKind.NAME]
        self.src_by_id = {m.id: m for m in self.src_mentions}
        for m in self.tgt_mentions:
            if m.role in SUBJECT_RELS and m.pron_type != "possessive" and m.clause >= 0:
                key = (m.seg, m.clause if m.kind != MentionKind.ZERO else m.head)
                self.tgt_subjects.setdefault(key, []).append(m)

    def aligned_sources(self, seg: int, tgt_tokens: Sequence[int]) -> list[int]:
        """The source tokens aligned to any of the target tokens of one segment, in order."""
        al = self.alignments[seg] if seg < len(self.alignments) else frozenset()
        wanted = set(tgt_tokens)
        return sorted({i for i, j in al if j in wanted})


# A direct method returns the link for a target mention (or the link it was given, unchanged or corrected).
DirectMethod = Callable[[LinkContext, Mention, "Link | None"], "Link | None"]
# A chain method revises the links of the whole document.
ChainMethod = Callable[[LinkContext, dict[str, Link]], None]


def by_name(ctx: LinkContext, m: Mention, link: Link | None) -> Link | None:
    """A name to the source chain holding the same name (or one containing it, or contained in it)."""
    if link is None and m.kind == MentionKind.NAME:
        return _name_link(m, ctx.src_names)
    return link


def by_lexicon(ctx: LinkContext, m: Mention, link: Link | None) -> Link | None:
    """A role noun to the source noun of its segment that the bilingual lexicon gives it as a translation."""
    if link is not None or m.kind != MentionKind.NOUN:
        return link
    cands = [
        s
        for s in ctx.src_mentions
        if s.seg == m.seg and s.kind == MentionKind.NOUN and m.text.lower() in ctx.lexicon.get(s.text.lower(), ())
    ]
    if len({c.chain for c in cands}) == 1:
        return Link(m.id, cands[0].chain, LinkMethod.LEXICON, CONF_LEXICON, cands[0].id)
    return None


def by_alignment(ctx: LinkContext, m: Mention, link: Link | None) -> Link | None:
    """An overt mention to the chain of the source mentions the word aligner paired its words with."""
    if link is not None or m.kind == MentionKind.ZERO:
        return link
    via = {ctx.by_token[(m.seg, i)] for i in ctx.aligned_sources(m.seg, m.tokens) if (m.seg, i) in ctx.by_token}
    if m.pron_type == "possessive":
        # "his daughter" / "su hija": a possessive aligned to the possessed noun is not about it.
        via = {v for v in via if v.kind == MentionKind.PRONOUN}
        if m.read_by_form:
            # "su cara" leaves its possessor to the reader; "his face", read in its own sentence, names
            # someone there: the source resolver's guess for "su" does not overrule it.
            via = {v for v in via if v.gender is not None}
    hits = {v.chain for v in via}
    if len(hits) == 1:
        return Link(m.id, hits.pop(), LinkMethod.ALIGNMENT, CONF_ALIGNED, min(via, key=lambda v: v.start).id)
    return None


def by_projection(ctx: LinkContext, m: Mention, link: Link | None) -> Link | None:
    """A subject (overt or zero) to the subject of the source clause its clause is aligned to; also corrects an
    alignment link of a gendered subject pronoun that the aligner paired by its form (see below)."""
    subject = (m.role in SUBJECT_RELS or m.kind == MentionKind.ZERO) and m.pron_type != "possessive"
    if not subject:
        return link
    if link is None:
        return _projected(ctx, m)
    if m.kind == MentionKind.PRONOUN and m.gender is not None:
        # A word aligner pairs pronouns by their forms, so a subject pronoun of the wrong gender tends to be
        # paired with a source pronoun of its own gender elsewhere in the sentence ("he assured that she
        # ..." / "él aseguró que él..."). Where the source pronoun it was paired with has its gender, is the
        # subject of a clause whose translation has a subject of its own, and is the subject of none of the
        # source clauses aligned to the pronoun's clause, which have one subject, the clause structure decides.
        via_m = ctx.src_by_id[link.via]
        if (via_m.gender == m.gender and via_m.kind == MentionKind.PRONOUN
                and _translated_with_other_subject(ctx, via_m, m)):
            subjects = _aligned_subjects(ctx, m)
            if via_m not in subjects.values() and len(subjects) == 1:
                ((cid, subj),) = subjects.items()
                if cid != link.source_chain:
                    return Link(m.id, cid, LinkMethod.PROJECTION, CONF_PROJECTED, subj.id)
    return link


def names_speak_for_nouns(ctx: LinkContext, links: dict[str, Link]) -> None:
    """A name speaks for the nouns joined to it by structure (apposition, title, predicate), not by pronoun
    resolution: "el director de Ruiz, Ana Ruiz" goes where "Ana Ruiz" goes, whatever the aligner paired
    "director" with."""
    for group in _target_chains(ctx).values():
        named = {links[o.id].source_chain for o in group if o.kind == MentionKind.NAME and o.id in links
                 and links[o.id].method == LinkMethod.NAME}
        if len(named) != 1:
            continue
        (target_chain,) = named
        for o in group:
            link = links.get(o.id)
            if (o.kind == MentionKind.NOUN and not o.antecedent and link is not None
                    and link.method in (LinkMethod.ALIGNMENT, LinkMethod.PROJECTION)
                    and link.source_chain != target_chain):
                links[o.id] = Link(o.id, target_chain, LinkMethod.CHAIN, CONF_CHAIN)


def inherit_through_chain(ctx: LinkContext, links: dict[str, Link]) -> None:
    """A mention no direct method reached goes where most linked mentions of its target chain go (no tie)."""
    members = _target_chains(ctx)
    for m in ctx.tgt_mentions:
        if m.id in links:
            continue
        votes = Counter(links[o.id].source_chain for o in members[m.chain] if o.id in links)
        if votes:
            (best, n), *rest = votes.most_common()
            if not rest or n > rest[0][1]:
                links[m.id] = Link(m.id, best, LinkMethod.CHAIN, CONF_CHAIN * m.certainty)


DIRECT_METHODS: tuple[DirectMethod, ...] = (by_name, by_lexicon, by_alignment, by_projection)
CHAIN_METHODS: tuple[ChainMethod, ...] = (names_speak_for_nouns, inherit_through_chain)


def link_all(ctx: LinkContext) -> dict[str, Link]:
    """A link for every target mention that can be tied to a source chain, keyed by target mention id."""
    links: dict[str, Link] = {}
    for m in ctx.tgt_mentions:
        link = None
        for method in DIRECT_METHODS:
            link = method(ctx, m, link)
        if link is not None:
            # A link through a source mention is only as sure as that mention's place in its chain.
            sure = ctx.src_by_id[link.via].certainty
            links[m.id] = replace(link, confidence=link.confidence * sure) if sure < 1.0 else link
    for method in CHAIN_METHODS:
        method(ctx, links)
    return links


def link_mentions(
    src_mentions: Sequence[Mention],
    tgt_mentions: Sequence[Mention],
    src_res: Resolution,
    tgt_res: Resolution,
    src_parses: Sequence[ParsedText],
    tgt_parses: Sequence[ParsedText],
    alignments: Sequence[Alignment],
    lexicon: dict[str, frozenset[str]],
) -> dict[str, Link]:
    """`link_all` for mentions as extracted, with each side's coreference result."""
    return link_all(LinkContext(resolved_in_order(src_mentions, src_res), resolved_in_order(tgt_mentions, tgt_res),
                                src_parses, tgt_parses, alignments, lexicon))


def resolved_in_order(mentions: Sequence[Mention], res: Resolution) -> list[Mention]:
    """The resolved copies (chain, antecedent, certainty set) of `mentions`, in the order given."""
    by_id = {m.id: m for c in res.chains for m in c.mentions}
    return [by_id[m.id] for m in mentions]


def _target_chains(ctx: LinkContext) -> dict[str, list[Mention]]:
    members: dict[str, list[Mention]] = {}
    for m in ctx.tgt_mentions:
        members.setdefault(m.chain, []).append(m)
    return members


def _name_link(m: Mention, src_names: Sequence[Mention]) -> Link | None:
    words = set(m.key.split())
    exact = [s for s in src_names if s.key == m.key]
    if len({s.chain for s in exact}) == 1:
        return Link(m.id, exact[0].chain, LinkMethod.NAME, CONF_NAME, exact[0].id)
    partial = [s for s in src_names if words and (words <= set(s.key.split()) or set(s.key.split()) <= words)]
    if len({s.chain for s in partial}) == 1:
        return Link(m.id, partial[0].chain, LinkMethod.NAME, CONF_NAME * CONF_PARTIAL_NAME, partial[0].id)
    return None


def _translated_with_other_subject(ctx: LinkContext, via: Mention, m: Mention) -> bool:
    """Whether the clause the source subject `via` belongs to is aligned to a target clause whose subject is a
    mention other than `m`: then `via` is that subject's counterpart, and `m` only shares its form."""
    if via.clause < 0 or via.role not in SUBJECT_RELS:
        return False
    al = ctx.alignments[m.seg] if m.seg < len(ctx.alignments) else frozenset()
    src_parsed = ctx.src_parses[m.seg]
    verbs = {via.clause} | {k.i for k in src_parsed.children(via.clause) if k.deprel in CLAUSE_FUNCTION_RELS}
    targets = {j for i, j in al if i in verbs}
    return any(o is not m for j in targets for o in ctx.tgt_subjects.get((m.seg, j), ()))


def _aligned_subjects(ctx: LinkContext, m: Mention) -> dict[str, Mention]:
    """The subjects of the source clauses aligned to the target mention's clause, by source chain."""
    clause = m.clause if m.kind != MentionKind.ZERO else m.head
    if clause < 0:
        return {}
    tgt_parsed, src_parsed = ctx.tgt_parses[m.seg], ctx.src_parses[m.seg]
    verbs = [clause] + [k.i for k in tgt_parsed.children(clause) if k.deprel in CLAUSE_FUNCTION_RELS]
    if m.kind == MentionKind.ZERO:
        verbs += list(m.tokens)
    subjects = {}
    for i in ctx.aligned_sources(m.seg, verbs):
        subj = ctx.subject_of.get((m.seg, _clause_of(src_parsed, i)))
        if subj is not None:
            subjects[subj.chain] = subj
    return subjects


def _projected(ctx: LinkContext, m: Mention) -> Link | None:
    """Subject-verb projection: the target clause's aligned source clause, and that clause's subject."""
    subjects = _aligned_subjects(ctx, m)
    if len(subjects) == 1:
        ((cid, subj),) = subjects.items()
        return Link(m.id, cid, LinkMethod.PROJECTION, CONF_PROJECTED, subj.id)
    return None
