"""Coreference chains of person mentions, per document and side, by multi-pass deterministic sieves.

Passes run from the most precise to the least: exact name match, structural links (apposition, name-internal
compounds, predicate nominatives), partial name match, subjects of coordinated verbs, role-noun head match, and
finally pronoun and zero-subject resolution with syntactic constraints, salience and recency. Every pass agrees on
number and person; gender agreement is a switch, off on the side being checked so that a wrongly gendered target
pronoun still joins its entity instead of starting a new one.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

from gendertrace.model import Chain, Mention, ParsedText, Side
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import (
    BINARY,
    NOMINAL_KINDS,
    OBJECT_RELS,
    RELATIVE_CLAUSE_RELS,
    SUBJECT_RELS,
    Gender,
    MentionKind,
)

# Window, certainties and margin: rules/scoring/weights.yaml, section "coreference" (salience: "salience").
PRONOUN_WINDOW = WEIGHTS.coreference.pronoun_window
DISTANCE_CERTAINTY = WEIGHTS.coreference.distance_certainty
ALTERNATIVE_CERTAINTY = WEIGHTS.coreference.alternative_certainty
THING_CERTAINTY = WEIGHTS.coreference.thing_certainty
ALTERNATIVE_MARGIN = WEIGHTS.coreference.alternative_margin
SALIENCE = WEIGHTS.salience


@dataclass
class Resolution:
    """The chains of one side. Each chain's mentions carry their attachment: `chain`, `antecedent` (the mention
    a pronoun or zero subject was resolved to) and `certainty` (1.0 unless a choice was made).

    The tables keyed by mention id are views of those attributes, kept for callers that look mentions up by id.
    """

    chains: list[Chain]
    chain_of: dict[str, str]
    certainty: dict[str, float] = field(default_factory=dict)
    antecedent: dict[str, str] = field(default_factory=dict)
    # Gender-blind side: possessives attached to a person of their sentence by their own gender (see
    # _local_possessor), whom an alignment through an ungendered source possessive does not overrule.
    read_by_form: set[str] = field(default_factory=set)


class _Clusters:
    """Union-find over mention ids that keeps each cluster's members and their numbers and genders, so that
    asking for them costs the cluster's size (or nothing), never the document's."""

    def __init__(self, mentions: Sequence[Mention]) -> None:
        self.parent = {m.id: m.id for m in mentions}
        self.by_id = {m.id: m for m in mentions}
        self._members = {m.id: [m] for m in mentions}
        self._numbers = {m.id: {m.number} - {None} for m in mentions}
        self._genders = {m.id: _genders([m]) for m in mentions}
        self._name_words = {m.id: set(m.key.split()) if m.kind == MentionKind.NAME else set() for m in mentions}

    def find(self, x: str) -> str:
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def members(self, x: str) -> list[Mention]:
        """The mentions of x's cluster (in no particular order)."""
        return self._members[self.find(x)]

    def numbers(self, x: str) -> set[str]:
        return self._numbers[self.find(x)]

    def genders(self, x: str) -> set[str]:
        """The binary genders the cluster's marks show."""
        return self._genders[self.find(x)]

    def name_words(self, x: str) -> set[str]:
        """The words of the cluster's names."""
        return self._name_words[self.find(x)]

    def union(self, a: str, b: str) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            # Keep the earlier mention as representative so chain ids follow text order.
            first, second = sorted((ra, rb), key=lambda k: _order(self.by_id[k]))
            self.parent[second] = first
            self._members[first] = self._members[first] + self._members.pop(second)
            self._numbers[first] = self._numbers[first] | self._numbers.pop(second)
            self._genders[first] = self._genders[first] | self._genders.pop(second)
            self._name_words[first] = self._name_words[first] | self._name_words.pop(second)


def _order(m: Mention) -> tuple[int, int]:
    return (m.seg, m.start)


def _genders(ms: Sequence[Mention]) -> set[str]:
    return {mk.gender for m in ms for mk in m.marks if mk.gender in BINARY}


def _compatible_sets(na: set, nb: set, ga: set, gb: set, use_gender: bool) -> bool:
    """Number always; gender only when switched on, and only where both clusters show one."""
    if na and nb and not (na & nb):
        return False
    if use_gender and len(ga) == 1 and len(gb) == 1 and ga != gb:
        return False
    return True


@dataclass
class CorefState:
    """What the sieves of one side share: the mentions in text order, indexed by segment and by token, the
    clusters, and the attachments made so far."""

    mentions: list[Mention]
    parses: Sequence[ParsedText]
    use_gender: bool
    role_markers: frozenset[str]
    thing_pronouns: frozenset[str]
    clusters: _Clusters
    apart: dict[str, set[str]]  # mention id -> ids it can never share a chain with
    by_seg: dict[int, list[Mention]]
    by_token: dict[tuple[int, int], Mention]  # (segment, token) -> the overt mention there
    mention_tokens: set[tuple[int, int]]  # words that are some person's mention
    certainty: dict[str, float] = field(default_factory=dict)
    antecedent: dict[str, str] = field(default_factory=dict)
    read_by_form: set[str] = field(default_factory=set)
    narrator: str = ""  # a mention of the narrator (set by the `narrator` sieve), "" where there is none
    addressee: str = ""  # a mention of the person addressed (the `addressee` sieve), "" where there is none

    @classmethod
    def build(cls, mentions: Sequence[Mention], parses: Sequence[ParsedText], use_gender: bool,
              role_markers: frozenset[str], thing_pronouns: frozenset[str]) -> CorefState:
        ms = sorted(mentions, key=_order)
        apart: dict[str, set[str]] = {}
        for pair in _contained_pairs(ms, parses) | _disjoint_arguments(ms, parses):
            x, y = tuple(pair)
            apart.setdefault(x, set()).add(y)
            apart.setdefault(y, set()).add(x)
        by_seg: dict[int, list[Mention]] = {}
        by_token: dict[tuple[int, int], Mention] = {}
        for m in ms:
            by_seg.setdefault(m.seg, []).append(m)
            if m.kind != MentionKind.ZERO:
                for t in m.tokens:
                    by_token[(m.seg, t)] = m
        return cls(ms, parses, use_gender, role_markers, thing_pronouns, _Clusters(ms), apart, by_seg, by_token,
                   {(x.seg, t) for x in ms for t in x.tokens})

    def of_kind(self, kind: str) -> list[Mention]:
        return [m for m in self.mentions if m.kind == kind]

    def in_segment(self, seg: int) -> list[Mention]:
        return self.by_seg.get(seg, [])

    def window(self, m: Mention) -> list[Mention]:
        """The mentions of the segments a pronoun or zero subject may look back to, its own included."""
        return [c for seg in range(max(m.seg - PRONOUN_WINDOW, 0), m.seg + 1) for c in self.by_seg.get(seg, ())]

    def join(self, a: Mention, b: Mention) -> bool:
        """Put a and b in one chain unless a binding constraint keeps two of their mentions apart or the
        chains disagree in number (or, where switched on, in gender). Returns whether it did."""
        cl = self.clusters
        ra, rb = cl.find(a.id), cl.find(b.id)
        if ra == rb:
            return True
        if self.apart:
            small, other = (ra, rb) if len(cl.members(ra)) <= len(cl.members(rb)) else (rb, ra)
            if any(cl.find(y) == other for x in cl.members(small) for y in self.apart.get(x.id, ())):
                return False
        if _compatible_sets(cl.numbers(ra), cl.numbers(rb), cl.genders(ra), cl.genders(rb), self.use_gender):
            cl.union(a.id, b.id)
            return True
        return False

    def attach(self, m: Mention, antecedent: Mention, certainty: float | None = None) -> None:
        self.antecedent[m.id] = antecedent.id
        if certainty is not None:
            self.certainty[m.id] = certainty


# ---------------------------------------------------------------------------------------------------------------
# The sieves, most precise first. Each reads and extends the state's clusters; a new sieve is one function here
# and one line in SIEVES.


def exact_names(st: CorefState) -> None:
    """Two names with the same normalised form."""
    names = st.of_kind(MentionKind.NAME)
    later: dict[str, list[Mention]] = {}
    for b in reversed(names):
        later.setdefault(b.key, []).insert(0, b)
    for a in names:
        same = later[a.key]
        same.pop(0)  # a itself: what is left are the names after it
        for b in same:
            st.join(a, b)


def structure(st: CorefState) -> None:
    """Inside a segment: apposition, name-internal compounds, titles before names, predicate nominatives,
    intensifying reflexives and the person noun predicated of a zero subject."""
    by_seg_head = st.by_token
    parses = st.parses
    for m in st.mentions:
        # "∅ era la responsable": a zero subject and the person noun predicated of it.
        if m.kind == MentionKind.ZERO:
            pred = by_seg_head.get((m.seg, m.head))
            if pred is not None and pred.kind == MentionKind.NOUN:
                st.join(pred, m)
            continue
        # "Wintour herself", "la ministra misma": an intensifying reflexive is the person it follows.
        held = _intensifier_of(m, parses[m.seg])
        if held >= 0:
            other = by_seg_head.get((m.seg, held))
            if other is not None and other.kind in NOMINAL_KINDS and st.join(other, m):
                st.attach(m, other)
            continue
        if m.kind not in NOMINAL_KINDS:
            continue
        tok = parses[m.seg].tokens[m.head]
        if tok.deprel in ("appos", "compound", "flat", "flat:name", "nmod:appos") and not tok.is_root:
            other = by_seg_head.get((m.seg, tok.head))
            if other is None and tok.deprel == "appos":
                other = _appos_through_modifier(parses[m.seg], tok.head, m.seg, by_seg_head)
            if other is not None and other.kind in NOMINAL_KINDS and other is not m:
                st.join(other, m)
        # A role noun right before a name is its title: "la ingeniera Carmen Ibarluce", "Captain Moira Tennick".
        if m.kind == MentionKind.NOUN:
            nxt = by_seg_head.get((m.seg, m.tokens[-1] + 1))
            if nxt is not None and nxt.kind == MentionKind.NAME:
                st.join(m, nxt)
        # "was elected president", "named her director": a person noun predicated of the clause's subject.
        if m.kind == MentionKind.NOUN and tok.deprel in ("xcomp", "attr") and not tok.is_root:
            for k in parses[m.seg].children(tok.head):
                subj = by_seg_head.get((m.seg, k.i))
                if k.deprel in SUBJECT_RELS and subj is not None and subj.kind in NOMINAL_KINDS:
                    st.join(subj, m)
        # "A es ministra" (UD: copular predicate nominal) and "A is the minister" (English: attr of be).
        if tok.deprel in ("nsubj",):
            head = parses[m.seg].tokens[tok.head]
            pred = by_seg_head.get((m.seg, head.i))
            has_cop = any(k.deprel == "cop" for k in parses[m.seg].children(head.i))
            if pred is not None and pred is not m and has_cop and pred.kind in NOMINAL_KINDS:
                st.join(m, pred)
            if head.lemma.lower() == "be":
                for k in parses[m.seg].children(head.i):
                    if k.deprel == "attr" and (m.seg, k.i) in by_seg_head:
                        st.join(m, by_seg_head[(m.seg, k.i)])


def role_markers(st: CorefState) -> None:
    """"se incorporó como becaria", "joined as a trainee": the role noun is the clause's subject (or object)."""
    if not st.role_markers:
        return
    for m in st.mentions:
        if m.kind != MentionKind.NOUN:
            continue
        parsed = st.parses[m.seg]
        verb = _role_marked_verb(parsed, m.head, st.role_markers)
        if verb < 0:
            continue
        holder = st.by_token.get((m.seg, verb))
        if holder is not None and holder.kind in NOMINAL_KINDS and holder is not m:
            st.join(holder, m)  # "la incorporación de Julián Ferrás como secretario": no verb, a name
            continue
        # With an object pronoun the role is predicated of the object ("la describió como una mujer
        # valiente", "lo nombraron como director"); otherwise of the subject.
        seg = st.in_segment(m.seg)
        obj = _clause_object(seg, m, verb)
        holder = obj if obj is not None and obj.kind == MentionKind.PRONOUN else _clause_subject(seg, m, verb)
        if holder is None:
            # A non-finite clause has its subject understood: the object of the verb above where it has
            # one ("le permite seguir como secretaria": object control), else that verb's subject.
            above = _nonfinite_under(parsed, verb)
            if above >= 0:
                holder = _clause_object(seg, m, above) or _clause_subject(seg, m, above)
        if holder is not None:
            st.join(holder, m)


def partial_names(st: CorefState) -> None:
    """One name's words contained in another's ("Zubelzu" in "Amaia Zubelzu"), where the shorter one fits
    only one person."""
    names = st.of_kind(MentionKind.NAME)
    cl = st.clusters
    words = [set(n.key.split()) for n in names]
    with_word: dict[str, list[int]] = {}
    for k, ws in enumerate(words):
        for w in ws:
            with_word.setdefault(w, []).append(k)
    for i, a in enumerate(names):
        # A name containing or contained in a's shares a word with it: only those can match.
        for j in sorted({j for w in words[i] for j in with_word[w] if j > i}):
            b = names[j]
            if cl.find(a.id) == cl.find(b.id):
                continue
            wa, wb = words[i], words[j]
            if wa <= wb or wb <= wa:
                shorter = wa if len(wa) <= len(wb) else wb
                # A lone first name shared by two different full names is not enough.
                holders = {k for w in shorter for k in with_word[w]}
                if len({cl.find(names[k].id) for k in holders if shorter < words[k]}) <= 1:
                    st.join(a, b)


def coordinated_subjects(st: CorefState) -> None:
    """The zero subject of a coordinated verb shares the subject of the first conjunct."""
    subj_of_clause: dict[tuple[int, int], Mention] = {}
    for m in st.mentions:
        if m.role in SUBJECT_RELS and m.clause >= 0 and m.pron_type != "possessive":
            subj_of_clause.setdefault((m.seg, m.clause), m)
    for m in st.mentions:
        if m.kind != MentionKind.ZERO:
            continue
        t = st.parses[m.seg].tokens[m.head]
        if t.deprel == "conj" and (m.seg, t.head) in subj_of_clause:
            other = subj_of_clause[(m.seg, t.head)]
            if other is not m and st.join(other, m):
                st.attach(m, other)


def role_noun_heads(st: CorefState) -> None:
    """The same role noun again ("la ministra ... la ministra"). An indefinite noun phrase introduces a new
    person rather than taking up one already mentioned ("la mujer ... como un hombre"), so the later mention
    must not be indefinite. Two nouns of a pair made of different words ("el rey ... la reina", "el padre ... la
    madre") share a key but name two people; the two inflections of one noun ("el ministro ... la ministra") may
    be one person whose gender a translation got wrong once."""
    nouns = st.of_kind(MentionKind.NOUN)
    cl = st.clusters
    later: dict[str, list[Mention]] = {}
    for b in reversed(nouns):
        later.setdefault(b.key, []).insert(0, b)
    for a in nouns:
        same = later[a.key]
        same.pop(0)
        for b in same:
            if (cl.find(a.id) != cl.find(b.id) and not _different_names(cl, a, b)
                    and _one_noun(a.text, b.text) and not _indefinite(st.parses[b.seg], b.head)):
                st.join(a, b)


def _one_noun(a: str, b: str) -> bool:
    """Whether two forms are one noun, perhaps in its two genders: equal once a final gender vowel is dropped
    ("ministro"/"ministra", "profesor"/"profesora"), unlike the words of a pair ("rey"/"reina")."""
    a, b = a.lower(), b.lower()
    return a == b or a.rstrip("aeo") == b.rstrip("aeo")


def quoted_speakers(st: CorefState) -> None:
    """A first person inside a quotation is its speaker: the nearest subject outside the quotation in the same
    segment ("«Estoy cansada», dijo Ana"; "Ana said: 'I am tired'")."""
    for m in st.mentions:
        if m.person != "1" or not m.quoted:
            continue
        speakers = [
            c
            for c in st.in_segment(m.seg)
            if not c.quoted
            and c.person not in ("1", "2")
            and c.role in SUBJECT_RELS
            and c.pron_type != "possessive"
        ]
        if speakers:
            best = min(speakers, key=lambda c: abs(c.head - m.head))
            if st.join(best, m):
                st.attach(m, best, 1.0 if len(speakers) == 1 else ALTERNATIVE_CERTAINTY)


def _is_narrator(m: Mention) -> bool:
    return m.person == "1" and not m.quoted and m.number != "plur"


def _is_addressee(m: Mention) -> bool:
    return m.person == "2" and not m.quoted and m.number != "plur"


def narrator(st: CorefState) -> None:
    """The first-person singular outside quotations is one person through the whole document, the narrator;
    a person noun predicated of it is the narrator too ("I am a mother", "soy la única chica", "I was the
    only girl")."""
    st.narrator = _one_person(st, _is_narrator)


def addressee(st: CorefState) -> None:
    """The second person outside quotations is one person through the document, the person addressed ("you
    are the first woman", "¿estás lista?"), unless the document also addresses several ("yourselves",
    "vosotras"): then no one person is meant."""
    if any(m.person == "2" and not m.quoted and m.number == "plur" for m in st.mentions):
        return
    st.addressee = _one_person(st, _is_addressee)


def _one_person(st: CorefState, belongs: Callable[[Mention], bool]) -> str:
    """Joins the mentions `belongs` picks, and the person nouns predicated of them; the first one's id."""
    first = None
    for m in st.mentions:
        if not belongs(m):
            continue
        if first is None:
            first = m
        else:
            st.join(first, m)
        if m.kind == MentionKind.ZERO or m.pron_type != "personal" or m.role not in SUBJECT_RELS:
            continue  # a zero subject's predicate noun is joined by `structure`
        parsed = st.parses[m.seg]
        head = parsed.tokens[parsed.tokens[m.head].head]
        pred = st.by_token.get((m.seg, head.i))
        if pred is not None and pred.kind == MentionKind.NOUN and (
                any(k.deprel == "cop" for k in parsed.children(head.i))):
            st.join(m, pred)
        if head.lemma.lower() == "be":
            for k in parsed.children(head.i):
                noun = st.by_token.get((m.seg, k.i))
                if k.deprel == "attr" and noun is not None and noun.kind == MentionKind.NOUN:
                    st.join(m, noun)
    return first.id if first is not None else ""


def pronouns(st: CorefState) -> None:
    """Pronouns and zero subjects, in text order, to the most salient compatible preceding cluster."""
    for m in st.mentions:
        if (m.kind not in (MentionKind.PRONOUN, MentionKind.ZERO) or m.id in st.antecedent
                or m.person in ("1", "2")):
            continue
        if not m.animate and m.gender is None:
            continue  # "it", "its", "ello": a thing, it joins no person
        best, alternatives, others = _pick_antecedent(m, st)
        if best is None:
            continue
        local = None if st.use_gender else _local_possessor(m, best, others, st.clusters)
        if local is not None and st.join(local, m):
            st.read_by_form.add(m.id)
            st.attach(m, local, ALTERNATIVE_CERTAINTY)  # the salient person was the other choice
            continue
        if st.join(best, m):
            # Another compatible cluster nearly as salient makes the choice uncertain, and so does distance,
            # and so does a thing the pronoun may stand for.
            far = min(m.seg - best.seg, len(DISTANCE_CERTAINTY) - 1)
            sure = ALTERNATIVE_CERTAINTY if alternatives else 1.0
            if m.key in st.thing_pronouns and _thing_subject_before(m, best, st.mention_tokens, st.parses):
                sure = min(sure, THING_CERTAINTY)
            st.attach(m, best, sure * DISTANCE_CERTAINTY[far])


Sieve = Callable[[CorefState], None]
# The order matters: each sieve sees the chains the ones before it built.
SIEVES: tuple[Sieve, ...] = (
    exact_names,
    structure,
    role_markers,
    partial_names,
    coordinated_subjects,
    role_noun_heads,
    narrator,
    addressee,
    quoted_speakers,
    pronouns,
)


def resolve_chains(
    mentions: Sequence[Mention],
    parses: Sequence[ParsedText],
    side: Side,
    use_gender: bool,
    role_markers: frozenset[str] = frozenset(),
    thing_pronouns: frozenset[str] = frozenset(),
    sieves: Sequence[Sieve] = SIEVES,
) -> Resolution:
    """Group one side's mentions into chains. `parses` are that side's segments, indexed by Mention.seg.

    `role_markers` are the words that introduce a role held by the subject ("como", "as"); `thing_pronouns` the
    subject pronouns that also stand for things ("il", "elle"). The returned chains hold the mentions with
    their attachment (`chain`, `antecedent`, `certainty`, `read_by_form`) set.
    """
    st = CorefState.build(mentions, parses, use_gender, role_markers, thing_pronouns)
    for sieve in sieves:
        sieve(st)
    return _chains(st, side)


def _chains(st: CorefState, side: Side) -> Resolution:
    groups: dict[str, list[Mention]] = {}
    for m in st.mentions:
        groups.setdefault(st.clusters.find(m.id), []).append(m)
    chains, chain_of = [], {}
    prefix = "S" if side == "source" else "T"
    for n, (_, members) in enumerate(sorted(groups.items(), key=lambda kv: _order(kv[1][0])), 1):
        cid = f"{prefix}{n}"
        resolved = tuple(replace(mm, chain=cid, antecedent=st.antecedent.get(mm.id, ""),
                                 certainty=st.certainty.get(mm.id, 1.0), read_by_form=mm.id in st.read_by_form)
                         for mm in members)
        chains.append(Chain(cid, side, resolved))
        for mm in members:
            chain_of[mm.id] = cid
    return Resolution(chains, chain_of, dict(st.certainty), dict(st.antecedent), set(st.read_by_form))


def _clause_subject(ms: Sequence[Mention], m: Mention, clause: int) -> Mention | None:
    return next((c for c in ms if c is not m and c.seg == m.seg and c.clause == clause
                 and c.role in SUBJECT_RELS and c.pron_type != "possessive"), None)


def _clause_object(ms: Sequence[Mention], m: Mention, clause: int) -> Mention | None:
    return next((c for c in ms if c is not m and c.seg == m.seg and c.clause == clause
                 and c.role in OBJECT_RELS and c.pron_type != "possessive"), None)


def _appos_through_modifier(parsed: ParsedText, head: int, seg: int, by_seg_head: dict) -> Mention | None:
    """An appositive attached to the last noun of a modifier ("the doctor on call, Ana Ruiz"): the person noun
    that the modifier belongs to."""
    t = parsed.tokens[head]
    for _ in range(3):
        if t.is_root:
            return None
        t = parsed.tokens[t.head]
        found = by_seg_head.get((seg, t.i))
        if found is not None and found.kind == "noun":
            return found
        if t.upos in ("VERB", "AUX"):
            return None
    return None


def _contained_pairs(ms: Sequence[Mention], parses: Sequence[ParsedText]) -> set[frozenset[str]]:
    """Pairs of mentions that cannot be one person because one stands inside the other's noun phrase as its
    determiner or modifier: "su hijo", "la mujer de Tomás" (the i-within-i condition). An apposition or a
    name part is the same person, not a modifier, so a mention attached by one starts no such pair."""
    by_head: dict[tuple[int, int], list[Mention]] = {}
    for m in ms:
        if m.kind != MentionKind.ZERO:
            by_head.setdefault((m.seg, m.head), []).append(m)
    out: set[frozenset[str]] = set()
    for m in ms:
        if m.kind == MentionKind.ZERO:
            continue
        t = parses[m.seg].tokens[m.head]
        if t.is_root or t.deprel in ("appos", "nmod:appos", "flat", "flat:name", "compound"):
            continue
        if _intensifier_of(m, parses[m.seg]) >= 0:
            continue
        for h in _noun_phrases_around(parses[m.seg], m.head):
            for c in by_head.get((m.seg, h), ()):
                if c is not m:
                    out.add(frozenset((m.id, c.id)))
    return out


def _disjoint_arguments(ms: Sequence[Mention], parses: Sequence[ParsedText]) -> set[frozenset[str]]:
    """Pairs that binding principle B keeps apart whatever else joins them: a personal pronoun that is not the
    subject, and the subject (overt or understood) of its own clause or of a clause sharing that subject ("La
    describió": whoever described is not the one described, even where both are "she" a sentence earlier)."""
    subjects: dict[tuple[int, int], list[Mention]] = {}
    for m in ms:
        if m.role in SUBJECT_RELS and m.pron_type != "possessive" and m.clause >= 0:
            subjects.setdefault((m.seg, m.clause), []).append(m)
    out: set[frozenset[str]] = set()
    for m in ms:
        if (m.kind != MentionKind.PRONOUN or m.pron_type != "personal" or m.role in SUBJECT_RELS
                or m.clause < 0):
            continue
        for clause in _subject_clauses(parses[m.seg], m.clause):
            for c in subjects.get((m.seg, clause), ()):
                if c is not m:
                    out.add(frozenset((m.id, c.id)))
    return out


def _intensifier_of(m: Mention, parsed: ParsedText) -> int:
    """The head token of the noun phrase a reflexive pronoun intensifies ("the minister herself", "Wintour
    himself": attached to the noun with no preposition of its own), or -1 where it is no intensifier."""
    if m.kind != MentionKind.PRONOUN or m.pron_type != "reflexive":
        return -1
    t = parsed.tokens[m.head]
    if t.is_root or any(k.deprel == "case" for k in parsed.children(t.i)):
        return -1
    if t.deprel in ("obl:npmod", "npmod") and t.i > 0 and parsed.tokens[t.i - 1].upos in ("NOUN", "PROPN"):
        # Hung on the verb as a bare noun-phrase adjunct, it still intensifies the noun right before it, the
        # last conjunct of a coordination ("the advisor and Queen Ana herself").
        return t.i - 1
    head = parsed.tokens[t.head]
    return head.i if head.upos in ("NOUN", "PROPN") else -1


def _reflexive_scope(parsed: ParsedText, i: int) -> set[int]:
    """Clauses whose subject a reflexive at token i may take: its verb, the clauses that verb shares its
    subject with (coordination) and, for a non-finite verb, the clause that controls it."""
    t = parsed.tokens[i]
    for _ in range(6):  # up to the verb: "de sí misma" hangs on a noun or an adjective first
        if t.upos in ("VERB", "AUX") or t.is_root:
            break
        t = parsed.tokens[t.head]
    scope: set[int] = set()
    verb = t.i
    while verb >= 0 and verb not in scope:
        scope |= _subject_clauses(parsed, verb)
        verb = _nonfinite_under(parsed, verb)
    return scope


def _subject_clauses(parsed: ParsedText, clause: int) -> set[int]:
    """The clause and, while it is a conjoined verb with no subject of its own, the clauses whose subject it
    shares."""
    out = {clause}
    while clause >= 0:
        t = parsed.tokens[clause]
        if t.is_root or t.deprel != "conj" or any(k.deprel in ("nsubj", "nsubj:pass", "csubj")
                                                  for k in parsed.children(clause)):
            break
        clause = t.head
        if clause in out:
            break
        out.add(clause)
    return out


def _nonfinite_under(parsed: ParsedText, clause: int) -> int:
    """For a non-finite clause head (infinitive or participle complement), the clause it depends on; else -1."""
    if clause < 0:
        return -1
    t = parsed.tokens[clause]
    finite = t.finite or any(
        k.finite for k in parsed.children(clause) if k.deprel in ("aux", "cop", "aux:pass")
    )
    if finite or t.is_root or t.deprel not in ("xcomp", "ccomp", "advcl"):
        return -1
    return t.head


def _unique_container(words: set[str], names: Sequence[Mention], cl: _Clusters) -> bool:
    containers = {cl.find(n.id) for n in names if words < set(n.key.split())}
    return len(containers) <= 1


def _different_names(cl: _Clusters, a: Mention, b: Mention) -> bool:
    """Two clusters that each carry a name, and no name in common: two people who share a role noun."""
    na, nb = cl.name_words(a.id), cl.name_words(b.id)
    return bool(na) and bool(nb) and not (na & nb)


def _role_marked_verb(parsed: ParsedText, head: int, markers: frozenset[str]) -> int:
    """The verb a role noun depends on through a role marker ("como", "as"), or -1."""
    t = parsed.tokens[head]
    if any(k.text.lower() in markers for k in parsed.children(head) if k.deprel in ("case", "mark")):
        return -1 if t.is_root else t.head
    if t.deprel == "pobj" and not t.is_root:  # ClearNLP: the noun hangs on the preposition
        prep = parsed.tokens[t.head]
        if prep.text.lower() in markers and not prep.is_root:
            return prep.head
    return -1


def _relative_subject_head(parsed: ParsedText, clause: int) -> int:
    """The noun a relative clause describes, when `clause` is that relative clause and its subject is the
    relative pronoun ("the person who cares"); else -1."""
    if clause < 0:
        return -1
    t = parsed.tokens[clause]
    if t.is_root:
        return -1
    first = min(parsed.subtree(t.i))
    # The relative pronoun: marked PronType=Rel, or (where a tagger leaves it unmarked, as for "who") a
    # pronoun with no person that opens the clause.
    relative = [k for k in parsed.children(t.i)
                if k.deprel in SUBJECT_RELS and k.upos == "PRON"
                and ("Rel" in (k.feat("PronType") or "") or (k.i == first and not k.feat("Person")))]
    if not relative or t.deprel not in ("acl:relcl", "acl"):
        return -1
    return t.head


def _relative_antecedent(parsed: ParsedText, clause: int) -> int:
    """The noun a relative clause hangs on, when `clause` is (inside) one; else -1."""
    t = parsed.tokens[clause] if clause >= 0 else None
    for _ in range(8):
        if t is None or t.is_root:
            return -1
        # Some pipelines label a relative clause plain acl: its relative pronoun shows what it is.
        if t.deprel in RELATIVE_CLAUSE_RELS or (t.deprel == "acl" and any(
                "Rel" in (k.feat("PronType") or "") for k in parsed.children(t.i))):
            return t.head
        t = parsed.tokens[t.head]
    return -1


# Relations inside a noun phrase: a word attached by one of them is part of its head's phrase.
NOMINAL_RELS = frozenset({"det", "det:poss", "nmod:poss", "nmod", "appos", "amod", "flat", "flat:name",
                          "compound", "nmod:appos", "case", "fixed"})


def _noun_phrases_around(parsed: ParsedText, i: int) -> set[int]:
    """Heads of the noun phrases that contain token i: up from i as long as the relation is nominal.

    An apposition counts only where punctuation sets it off ("Alicia, su mujer"): without it, the parser's
    appos is as often a misread second object ("cost the director her job").
    """
    out: set[int] = set()
    t = parsed.tokens[i]
    while not t.is_root and t.deprel in NOMINAL_RELS and t.head not in out:
        if t.deprel in ("appos", "nmod:appos") and not _set_off(parsed, t.i):
            break
        out.add(t.head)
        t = parsed.tokens[t.head]
    return out


def _set_off(parsed: ParsedText, i: int) -> bool:
    """Whether the phrase headed by token i is preceded by a comma, dash, colon or bracket."""
    first = min(parsed.subtree(i))
    return first > 0 and parsed.tokens[first - 1].text in (",", "(", "-", "–", "—", ":")


_ADJUNCTS = ("obl", "advcl", "advmod", "nmod", "dislocated", "discourse", "vocative", "parataxis", "prep")


def _in_fronted_adjunct(parsed: ParsedText, i: int, clause: int) -> bool:
    """Whether token i stands inside an adjunct of `clause` (a prepositional phrase, an adverbial clause) that
    comes before the clause's verb."""
    k = i
    while not parsed.tokens[k].is_root and parsed.tokens[k].head != clause:
        k = parsed.tokens[k].head
    t = parsed.tokens[k]
    return t.head == clause and t.deprel.split(":")[0] in _ADJUNCTS and max(parsed.subtree(k)) < clause


def _indefinite(parsed: ParsedText, head: int) -> bool:
    """Whether the noun phrase headed by token `head` has an indefinite article (UD Definite=Ind)."""
    return any(k.deprel == "det" and k.feat("Definite") == "Ind" for k in parsed.children(head))


def _semicolon_between(parsed: ParsedText, before: int, after: int) -> bool:
    """Whether a semicolon stands between token `before` and a later token `after`."""
    return before < after and any(t.text == ";" for t in parsed.tokens[before + 1:after])


def _subtree(parsed: ParsedText, i: int) -> set[int]:
    return set(parsed.subtree(i))


def _salience(cand: Mention, m: Mention) -> float:
    distance = m.seg - cand.seg
    score = -SALIENCE.per_segment * distance
    if distance == 0:
        score -= min(SALIENCE.per_word * max(m.head - cand.head, 0), SALIENCE.per_word_cap)  # nearer words first
    if cand.role in SUBJECT_RELS:
        score += SALIENCE.subject
    if cand.kind in NOMINAL_KINDS:
        score += SALIENCE.nominal
    if cand.seg == m.seg and cand.sent == m.sent:
        score += SALIENCE.same_sentence
    return score


@dataclass(frozen=True)
class _Scope:
    """The syntactic facts about a pronoun or zero subject that every candidate antecedent is tested against."""

    containers: set[int]  # heads of the noun phrases a possessive stands in
    reflexive_scope: set[int]  # clauses whose subject a reflexive may take
    relative_heads: set[int]  # nouns a relative clause around a reflexive describes
    governing: int  # the clause above a non-finite one, or -1
    local_subject_clauses: set[int]  # the clause and those sharing its subject
    own_numbers: set[str]
    own_genders: set[str]

    @classmethod
    def of(cls, m: Mention, parsed: ParsedText) -> _Scope:
        reflexive_scope = _reflexive_scope(parsed, m.head) if m.pron_type == "reflexive" else set()
        return cls(
            _noun_phrases_around(parsed, m.head) if m.pron_type == "possessive" else set(),
            reflexive_scope,
            # A reflexive in a relative clause whose subject is the relative pronoun is bound by the noun that
            # clause describes ("a person who cares only about herself").
            {h for h in (_relative_subject_head(parsed, k) for k in reflexive_scope) if h >= 0},
            _nonfinite_under(parsed, m.clause),
            _subject_clauses(parsed, m.clause),
            {m.number} - {None},
            _genders([m]),
        )


def _pick_antecedent(m: Mention, st: CorefState):
    """The best preceding candidate for a pronoun or zero subject, the compatible alternatives near it (a choice
    made only because nothing else was there counts itself as its alternative: it is uncertain), and every other
    candidate, best first."""
    cl, use_gender = st.clusters, st.use_gender
    sc = _Scope.of(m, st.parses[m.seg])
    scored: dict[str, tuple[float, Mention]] = {}
    fallback = None
    for c in st.window(m):
        if not _before_or_cataphoric(c, m, sc) or _contains_possessive(c, m, st, sc):
            continue
        if c.kind == MentionKind.PRONOUN and c.pron_type == "possessive" and c.seg == m.seg:
            # Two possessives of one sentence may belong to two people ("Ana y sus socios ... sus planes"):
            # an earlier one is the antecedent only when nothing else is ("su sueño ... su carrera").
            if m.pron_type == "possessive" and _order(c) < _order(m) and _compatible_sets(
                    cl.numbers(c.id), sc.own_numbers, cl.genders(c.id), sc.own_genders, use_gender):
                fallback = c
            continue
        if _excluded(c, m, st, sc):
            continue
        s = _candidate_salience(c, m, st, sc)
        root = cl.find(c.id)
        if root not in scored or s > scored[root][0]:
            scored[root] = (s, c)
    if not scored:
        return fallback, ([fallback] if fallback is not None else []), []  # a fallback is never certain
    if not m.quoted and any(not c.quoted for _, c in scored.values()):
        # Narration takes up the people of the narration: a person named inside someone's quoted words is
        # no antecedent while one outside the quotation fits ("'The child stays,' he said. He added...").
        scored = {r: sc_c for r, sc_c in scored.items() if not sc_c[1].quoted}
    ranked = sorted(scored.values(), key=lambda x: -x[0])
    best_score, best = ranked[0]
    alternatives = [c for s, c in ranked[1:] if best_score - s < ALTERNATIVE_MARGIN]
    if not use_gender and alternatives and m.gender:
        # Gender-blind side: an alternative only matters when its gender would fit the pronoun.
        alternatives = [c for c in alternatives if m.gender in (cl.genders(c.id) or {m.gender})]
    return best, alternatives, [c for _, c in ranked[1:]]


def _before_or_cataphoric(c: Mention, m: Mention, sc: _Scope) -> bool:
    """Whether c precedes m within the window, or is the subject a possessive may point forward to: that of
    its own clause ("Por su parte, la ingeniera..."), or, inside a non-finite clause, that of the clause it
    depends on ("Alejándose de su discurso, la candidata...")."""
    cataphoric = (
        m.pron_type == "possessive"
        and c.seg == m.seg
        and c.clause in (m.clause, sc.governing)
        and c.clause >= 0
        and c.role in SUBJECT_RELS
        and c.kind in NOMINAL_KINDS
    )
    return not ((_order(c) >= _order(m) and not cataphoric) or m.seg - c.seg > PRONOUN_WINDOW)


def _contains_possessive(c: Mention, m: Mention, st: CorefState, sc: _Scope) -> bool:
    """A possessive is not a person whose noun phrase contains it: "su hijo", "his son", "Alicia, su mujer",
    "el padre de su amiga" (the i-within-i condition)."""
    return bool(sc.containers) and any(x.seg == m.seg and x.head in sc.containers
                                       for x in st.clusters.members(c.id))


def _excluded(c: Mention, m: Mention, st: CorefState, sc: _Scope) -> bool:
    """Whether binding, quotation, reflexive scope or agreement rules candidate c out for m."""
    cl, parses, use_gender = st.clusters, st.parses, st.use_gender
    own_numbers, own_genders = sc.own_numbers, sc.own_genders
    local_subject_clauses, governing = sc.local_subject_clauses, sc.governing
    reflexive_scope, relative_heads = sc.reflexive_scope, sc.relative_heads
    if not c.animate or c.person in ("1", "2"):
        # Clitics that may stand for things are anaphors only; a quoted "I" belongs to its speaker, and the
        # first and second persons are the speaker and the person addressed, never a third person.
        return True
    if cl.find(c.id) == cl.find(m.id):
        return True
    if st.narrator and m.person != "1" and cl.find(c.id) == cl.find(st.narrator):
        return True  # a third person is never the narrator, nor the noun the narrator said they are
    if st.addressee and m.person != "2" and cl.find(c.id) == cl.find(st.addressee):
        return True  # nor the person addressed
    # Binding: a non-reflexive personal pronoun does not corefer with the subject of its own clause (which a
    # conjoined verb without a subject shares: "took a ladder and sat on him"), nor, as the subject of a
    # non-finite clause ("allowed her to stay"), with the subject of the clause above.
    if (
        m.kind == MentionKind.PRONOUN
        and m.pron_type == "personal"
        and c.seg == m.seg
        and c.role in SUBJECT_RELS
    ):
        if m.role not in SUBJECT_RELS and c.clause in local_subject_clauses:
            return True
        if (
            m.role in SUBJECT_RELS
            and governing == c.clause >= 0
        ):
            return True
    # Binding principle C: a subject (overt or zero) does not corefer with a name or noun inside its own
    # clause ("∅ dijo [que el sospechoso...]", "he said John..."), unless the name stands in an adjunct
    # put before it, which the subject does not command ("Según la cuenta del director, ∅ ha hecho...",
    # "According to the director's count, she has made..."), or before a semicolon: that joins independent
    # clauses, whatever the parser hung the first one on ("Ana was born in Tarvel; she grew up...").
    if (
        m.role in SUBJECT_RELS
        and c.seg == m.seg
        and c.kind in NOMINAL_KINDS
        and m.clause >= 0
        and c.head in _subtree(parses[m.seg], m.clause)
        and not _in_fronted_adjunct(parses[m.seg], c.head, m.clause)
        and not _semicolon_between(parses[m.seg], c.head, m.head)
    ):
        return True
    # A speaker outside a quotation is not a person mentioned inside it, and vice versa.
    if c.seg == m.seg and c.sent == m.sent and c.quoted != m.quoted:
        return True
    # A reflexive takes the subject of its own clause: the verb it depends on, or the subject that verb
    # shares or is controlled by ("tiene que sacar lo mejor de sí misma").
    if m.pron_type == "reflexive" and not (c.seg == m.seg and (c.clause == m.clause
                                                               or c.clause in reflexive_scope
                                                               or c.head in relative_heads)):
        return True
    if not _compatible_sets(cl.numbers(c.id), own_numbers, cl.genders(c.id), own_genders, use_gender):
        return True
    # A clitic that may stand for a thing joins a person only where the person's known gender matches it.
    if use_gender and not m.animate and m.gender not in cl.genders(c.id):
        return True
    return False


def _candidate_salience(c: Mention, m: Mention, st: CorefState, sc: _Scope) -> float:
    """How salient candidate c is as m's antecedent."""
    cl, parses, use_gender = st.clusters, st.parses, st.use_gender
    relative_heads = sc.relative_heads
    s = _salience(c, m)
    if c.seg == m.seg and c.head in relative_heads:
        s += SALIENCE.relative_head
    if (
        m.pron_type == "possessive"
        and c.seg == m.seg
        and c.clause == m.clause
        and c.role in SUBJECT_RELS
    ):
        s += SALIENCE.possessive_own_subject  # possessives lean to the subject of their own clause
    if (
        m.pron_type == "possessive"
        and c.seg == m.seg
        and c.head == _relative_antecedent(parses[m.seg], m.clause)
    ):
        # In a relative clause, the noun it describes is that clause's subject or object.
        s += SALIENCE.possessive_relative_antecedent
    # Entities mentioned often stay salient; on the source side a matching known gender is preferred.
    s += min(SALIENCE.per_mention * (len(cl.members(c.id)) - 1), SALIENCE.per_mention_cap)
    if use_gender and m.gender and m.gender in cl.genders(c.id):
        s += SALIENCE.known_gender
    return s


def _thing_subject_before(m: Mention, best: Mention, mention_tokens: set[tuple[int, int]],
                          parses: Sequence[ParsedText]) -> bool:
    """Whether a subject pronoun that also stands for things has a thing noun as a subject that agrees with it
    in gender and number in its own segment before it or in the segment before, no further back than the
    person picked for it ("La mairie a confirmé que Varel... « ... », a-t-elle ajouté")."""
    if m.kind != MentionKind.PRONOUN or m.pron_type != "personal" or m.role not in SUBJECT_RELS:
        return False
    if m.gender not in BINARY:
        return False
    for seg in (m.seg, m.seg - 1):
        if seg < 0 or seg < best.seg:
            continue
        for t in parses[seg].tokens:
            if seg == m.seg and t.i >= m.head:
                break
            if (t.upos == "NOUN" and t.deprel in SUBJECT_RELS and t.gender == m.gender
                    and t.feat("Number") == "Sing" and (seg, t.i) not in mention_tokens):
                return True
    return False


def _local_possessor(m: Mention, best: Mention, others: Sequence[Mention], cl: _Clusters) -> Mention | None:
    """Gender-blind side: a possessive whose own form shows a gender ("his", "her") is read the way a reader
    of the target reads it where its clause offers two people. When the salient antecedent is the subject of
    a clause of the same sentence, its own form says the other gender and so do most gendered words of its
    chain, while the object of that clause, standing between the subject and the possessive, could be meant
    ("She pinned Dario Vell down by gripping his arm"), the possessive is about the object. A chain without
    such a majority proves nothing about the possessive and keeps it; so does an object whose chain shows the
    other gender too. Only the direct object competes: a person in a prepositional phrase or inside the
    subject ("Ortuño's wife ... made his first appearance") is no rival to the subject for a reader."""
    if m.pron_type != "possessive" or m.gender not in BINARY:
        return None
    if (best.seg != m.seg or best.sent != m.sent or _order(best) > _order(m)
            or best.role not in SUBJECT_RELS or best.clause < 0):
        return None
    other_gender = Gender.MASC if m.gender == Gender.FEM else Gender.FEM
    said = [mk.gender for x in cl.members(best.id) for mk in x.marks]
    if best.gender != other_gender or said.count(other_gender) <= said.count(m.gender):
        return None
    fitting = [
        c for c in others
        if c.seg == m.seg and c.clause == best.clause and c.role in OBJECT_RELS
        and _order(best) < _order(c) < _order(m) and c.kind in NOMINAL_KINDS
        and other_gender not in cl.genders(c.id)
    ]
    return max(fitting, key=_order) if fitting else None

