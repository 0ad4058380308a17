"""Cross-lingual links: each target mention to the source chain of the person it refers to.

Methods, most certain first: names by string identity, role nouns through the bilingual lexicon, word alignment
of the mention itself, subject-verb projection (a target subject links to the overt or zero subject of the aligned
source clause; this is what carries pro-drop sources), and finally inheritance through the target chain.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Sequence
from dataclasses import replace

from gendertrace.coref.sieves import Resolution
from gendertrace.link.align import Alignment
from gendertrace.model import Link, Mention, ParsedText
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import CLAUSE_FUNCTION_RELS, SUBJECT_RELS, MentionKind

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
    """A link for every target mention that can be tied to a source chain, keyed by target mention id."""
    by_token: dict[tuple[int, int], Mention] = {}
    subject_of: dict[tuple[int, int], Mention] = {}
    for m in src_mentions:
        if m.kind != MentionKind.ZERO:
            for t in m.tokens:
                by_token[(m.seg, t)] = m
        if m.role in SUBJECT_RELS and m.pron_type != "possessive" and m.clause >= 0:
            # Overt subjects win over a zero subject of the same clause (there should be none, but parses vary).
            key = (m.seg, m.clause)
            if key not in subject_of or subject_of[key].kind == "zero":
                subject_of[key] = m
    src_names = [m for m in src_mentions if m.kind == MentionKind.NAME]
    src_by_id = {m.id: m for m in src_mentions}
    tgt_subjects: dict[tuple[int, int], list[Mention]] = {}
    for m in tgt_mentions:
        if m.role in SUBJECT_RELS and m.pron_type != "possessive" and m.clause >= 0:
            tgt_subjects.setdefault((m.seg, m.clause if m.kind != MentionKind.ZERO else m.head), []).append(m)
    chain = src_res.chain_of
    links: dict[str, Link] = {}

    def aligned_sources(seg: int, tgt_tokens: Sequence[int]) -> list[int]:
        al = alignments[seg] if seg < len(alignments) else frozenset()
        wanted = set(tgt_tokens)
        return sorted({i for i, j in al if j in wanted})

    for m in tgt_mentions:
        link = None
        if m.kind == MentionKind.NAME:
            link = _name_link(m, src_names, chain)
        if link is None and m.kind == MentionKind.NOUN:
            cands = [
                s
                for s in src_mentions
                if s.seg == m.seg and s.kind == MentionKind.NOUN and m.text.lower() in lexicon.get(s.text.lower(), ())
            ]
            if len({chain[c.id] for c in cands}) == 1:
                link = Link(m.id, chain[cands[0].id], "lexicon", CONF_LEXICON, cands[0].id)
        if link is None and m.kind != MentionKind.ZERO:
            via = {by_token[(m.seg, i)] for i in aligned_sources(m.seg, m.tokens) if (m.seg, i) in by_token}
            if m.pron_type == "possessive":
                # "his daughter" / "su hija": a possessive aligned to the possessed noun is not about it.
                via = {v for v in via if v.kind == "pronoun"}
                if m.id in tgt_res.read_by_form:
                    # "su cara" leaves its possessor to the reader; "his face", read in its own sentence,
                    # names someone there: the source resolver's guess for "su" does not overrule it.
                    via = {v for v in via if v.gender is not None}
            hits = {chain[v.id] for v in via}
            if len(hits) == 1:
                link = Link(m.id, hits.pop(), "alignment", CONF_ALIGNED, min(via, key=lambda v: v.start).id)
        subject = (m.role in SUBJECT_RELS or m.kind == MentionKind.ZERO) and m.pron_type != "possessive"
        if link is None and subject:
            link = _projected(m, tgt_parses[m.seg], src_parses[m.seg], aligned_sources, subject_of, chain)
        elif link is not None and subject and m.kind == MentionKind.PRONOUN and m.gender is not None:
            # A word aligner pairs pronouns by their forms, so a subject pronoun of the wrong gender tends to be
            # paired with a source pronoun of its own gender elsewhere in the sentence ("he assured that she
            # ..." / "él aseguró que él..."). Where the source pronoun it was paired with has its gender, is the
            # subject of a clause whose translation has a subject of its own, and is the subject of none of the
            # source clauses aligned to the pronoun's clause, which have one subject, the clause structure decides.
            via_m = src_by_id[link.via]
            if (via_m.gender == m.gender and via_m.kind == MentionKind.PRONOUN
                    and _translated_with_other_subject(via_m, m, src_parses[m.seg], tgt_subjects, alignments)):
                subjects = _aligned_subjects(m, tgt_parses[m.seg], src_parses[m.seg], aligned_sources,
                                             subject_of, chain)
                if via_m not in subjects.values() and len(subjects) == 1:
                    ((cid, subj),) = subjects.items()
                    if cid != link.source_chain:
                        link = Link(m.id, cid, "projection", CONF_PROJECTED, subj.id)
        if link is not None:
            # A link through a source pronoun is only as sure as that pronoun's place in its chain.
            sure = src_res.certainty.get(link.via, 1.0)
            links[m.id] = replace(link, confidence=link.confidence * sure) if sure < 1.0 else link

    members: dict[str, list[Mention]] = {}
    for m in tgt_mentions:
        members.setdefault(tgt_res.chain_of[m.id], []).append(m)
    # A name speaks for the nouns joined to it by structure (apposition, title, predicate), not by pronoun
    # resolution: "el director de Ruiz, Ana Ruiz" goes where "Ana Ruiz" goes, whatever the aligner paired
    # "director" with.
    for group in members.values():
        named = {links[o.id].source_chain for o in group if o.kind == MentionKind.NAME and o.id in links
                 and links[o.id].method == "name"}
        if len(named) != 1:
            continue
        (target_chain,) = named
        for o in group:
            link = links.get(o.id)
            if (o.kind == MentionKind.NOUN and o.id not in tgt_res.antecedent and link is not None
                    and link.method in ("alignment", "projection") and link.source_chain != target_chain):
                links[o.id] = Link(o.id, target_chain, "chain", CONF_CHAIN)

    # Inheritance through the target chain, for mentions no direct method reached.
    for m in tgt_mentions:
        if m.id in links:
            continue
        votes = Counter(links[o.id].source_chain for o in members[tgt_res.chain_of[m.id]] if o.id in links)
        if votes:
            (best, n), *rest = votes.most_common()
            if not rest or n > rest[0][1]:
                conf = CONF_CHAIN * tgt_res.certainty.get(m.id, 1.0)
                links[m.id] = Link(m.id, best, "chain", conf)
    return links


def _name_link(m: Mention, src_names: Sequence[Mention], chain: dict[str, str]) -> Link | None:
    words = set(m.key.split())
    exact = [s for s in src_names if s.key == m.key]
    if len({chain[s.id] for s in exact}) == 1:
        return Link(m.id, chain[exact[0].id], "name", CONF_NAME, exact[0].id)
    partial = [s for s in src_names if words and (words <= set(s.key.split()) or set(s.key.split()) <= words)]
    if len({chain[s.id] for s in partial}) == 1:
        return Link(m.id, chain[partial[0].id], "name", CONF_NAME * CONF_PARTIAL_NAME, partial[0].id)
    return None


def _translated_with_other_subject(via: Mention, m: Mention, src_parsed: ParsedText,
                                   tgt_subjects: dict[tuple[int, int], list[Mention]], alignments) -> bool:
    """Whether the clause the source subject `via` belongs to is aligned to a target clause whose subject is a
    mention other than `m`: then `via` is that subject's counterpart, and `m` only shares its form."""
    if via.clause < 0 or via.role not in SUBJECT_RELS:
        return False
    al = alignments[m.seg] if m.seg < len(alignments) else frozenset()
    verbs = {via.clause} | {k.i for k in src_parsed.children(via.clause) if k.deprel in CLAUSE_FUNCTION_RELS}
    targets = {j for i, j in al if i in verbs}
    return any(o is not m for j in targets for o in tgt_subjects.get((m.seg, j), ()))


def _aligned_subjects(m, tgt_parsed, src_parsed, aligned_sources, subject_of, chain) -> dict[str, Mention]:
    """The subjects of the source clauses aligned to the target mention's clause, by source chain."""
    clause = m.clause if m.kind != MentionKind.ZERO else m.head
    if clause < 0:
        return {}
    verbs = [clause] + [k.i for k in tgt_parsed.children(clause) if k.deprel in CLAUSE_FUNCTION_RELS]
    if m.kind == MentionKind.ZERO:
        verbs += list(m.tokens)
    subjects = {}
    for i in aligned_sources(m.seg, verbs):
        subj = subject_of.get((m.seg, _clause_of(src_parsed, i)))
        if subj is not None:
            subjects[chain[subj.id]] = subj
    return subjects


def _projected(m, tgt_parsed, src_parsed, aligned_sources, subject_of, chain) -> Link | None:
    """Subject-verb projection: the target clause's aligned source clause, and that clause's subject."""
    subjects = _aligned_subjects(m, tgt_parsed, src_parsed, aligned_sources, subject_of, chain)
    if len(subjects) == 1:
        ((cid, subj),) = subjects.items()
        return Link(m.id, cid, "projection", CONF_PROJECTED, subj.id)
    return None
