"""Mentions of persons in one parsed segment, each with the gender marks the segment puts on it.

A mention is a person name, a role or kinship noun, a personal/possessive/reflexive pronoun, or (in pro-drop
languages) the zero subject of a finite verb. Its marks are the words whose form shows the person's gender:
the pronoun itself, the noun's inflection, a determiner or adjective agreeing with the noun, a predicative
adjective or participle agreeing with the subject, an honorific.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import replace

from gendertrace.mentions.agreement import (
    W_ADJECTIVE,
    W_CLITIC,
    W_DETERMINER,
    W_LEXICAL,
    W_PRONOUN,
    W_TITLE,
    W_UNMARKED_NOUN,
    article_form,
    honorifics_before,
    is_plural,
    np_marks,
    predicate_marks,
)
from gendertrace.mentions.segment import SegmentSide
from gendertrace.model import Mention, ParsedText, Side, Token
from gendertrace.rules import LanguageRules
from gendertrace.rules.loader import pronoun_key
from gendertrace.vocab import (
    BINARY,
    CLAUSE_FUNCTION_RELS,
    NAME_LINK_RELS,
    NOMINAL_KINDS,
    RELATIVE_CLAUSE_RELS,
    SUBJECT_LIKE_RELS,
    SUBJECT_RELS,
    EvidenceKind,
    Gender,
    MentionKind,
    NeutralRule,
    Rule,
)


def _name_spans(parsed: ParsedText, known_names: set[str],
                speech_verbs: frozenset[str] = frozenset()) -> list[list[int]]:
    """Runs of person-name tokens: NER persons, proper nouns the recogniser left unlabelled that are the subject
    of a verb of saying ("Brannock said"), or proper-noun runs matching a name known from the other side."""
    spans: list[list[int]] = []
    run: list[int] = []
    toks = parsed.tokens
    speakers = _unlabelled_speakers(parsed, speech_verbs)

    def close() -> None:
        if run:
            spans.append(list(run))
            run.clear()

    for t in toks:
        is_name = (t.ent == "PER" and (t.upos in ("PROPN", "NOUN", "X", "ADJ") or _capitalised_inside(parsed, t))
                   or t.i in speakers)
        if is_name and run and toks[run[-1]].sent == t.sent and run[-1] == t.i - 1:
            run.append(t.i)
            continue
        close()
        if is_name:
            run.append(t.i)
    close()
    if known_names:
        taken = {i for s in spans for i in s}
        run = []
        for t in toks:
            if t.upos == "PROPN" and t.i not in taken:
                run.append(t.i)
                continue
            if run:
                spans.extend(_matching_subruns(run, toks, known_names))
                run = []
        if run:
            spans.extend(_matching_subruns(run, toks, known_names))
    # Honorifics and titles tagged as part of the name are kept apart (they are marks, not the name).
    return sorted(spans)


def _unlabelled_speakers(parsed: ParsedText, speech_verbs: frozenset[str]) -> set[int]:
    """Proper nouns with no entity label that are the subject of a verb of saying, with the proper nouns of
    their name: reporting verbs take people as subjects, and recognisers miss rare names more often than they
    miss organisations and places, which they label."""
    out: set[int] = set()
    if not speech_verbs:
        return out
    for t in parsed.tokens:
        if (t.upos == "PROPN" and not t.ent and t.deprel in SUBJECT_RELS and not t.is_root
                and parsed.tokens[t.head].lemma.lower() in speech_verbs):
            out.add(t.i)
            out.update(k.i for k in parsed.children(t.i)
                       if k.upos == "PROPN" and not k.ent and k.deprel in ("flat", "flat:name", "compound"))
    return out


def _capitalised_inside(parsed: ParsedText, t: Token) -> bool:
    """A capitalised word inside its sentence, after a word: where the recogniser calls it a person and the
    tagger a verb, a pronoun or a conjunction ("que Vogt ne parlait pas"), the tagger has misread a name (such words
    are capitalised only at the start; listed pronoun forms are kept out of names by the caller)."""
    if t.i == 0 or not t.text[:1].isupper():
        return False
    before = parsed.tokens[t.i - 1]
    return before.sent == t.sent and before.text[:1].isalnum()


def _matching_subruns(run: list[int], toks: tuple[Token, ...], known: set[str]) -> list[list[int]]:
    words = {toks[i].text.lower() for i in run}
    full = " ".join(toks[i].text.lower() for i in run)
    if full in known or any(w in known for w in words):
        return [run]
    return []


def name_key(text: str) -> str:
    return " ".join(text.lower().replace("\u2019", "'").split())


def extract_mentions(
    parsed: ParsedText,
    seg: int,
    seg_id: str,
    side: Side,
    rules: LanguageRules,
    known_names: Iterable[str] = (),
) -> list[Mention]:
    """All person mentions of one segment side, in text order, with their gender marks."""
    sc = SegmentSide(parsed, seg, seg_id, side, rules, {name_key(n) for n in known_names}, _quoted_tokens(parsed))
    sc.noun_like = _noun_like(sc)
    out: list[Mention] = []
    for extractor in EXTRACTORS:
        out += extractor(sc)
    out = [replace(m, quoted=True) if m.tokens and m.tokens[0] in sc.quoted else m for m in out]
    # Text order; at one position a name before a one-word mention, and a zero subject last.
    out.sort(key=lambda m: (m.start, m.kind == MentionKind.ZERO, m.kind != MentionKind.NAME,
                            m.head if m.kind in (MentionKind.NOUN, MentionKind.PRONOUN) else 0))
    return out


def name_mentions(sc: SegmentSide) -> list[Mention]:
    """Person names (not neopronouns the recogniser took for names: "Xe", "Ze"), each with the titles before
    it and its agreeing words."""
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    spans = [
        sp
        for sp in _name_spans(parsed, sc.known, rules.speech_verbs)
        if not any(f.gender == Gender.NEUTRAL for i in sp for f in rules.pronoun(toks[i].text))
        and not any(toks[i].upos == "PRON" and rules.pronoun(toks[i].text) for i in sp)
    ]
    out = []
    for span in spans:
        words = [toks[i] for i in span]
        # An honorific at the start of a name span is a title, not part of the name.
        title_marks = []
        while words and rules.honorific(words[0].text):
            title_marks.append(sc.mark(words[0], rules.honorific(words[0].text), EvidenceKind.TITLE, W_TITLE,
                                       Rule.HONORIFIC))
            words = words[1:]
        # So is a gendered person noun there ("King Aldric", "Sister Maren"): the recogniser often takes the
        # title into the name. Only nouns whose form alone shows the gender count (not a generic masculine).
        while len(words) > 1 and words[0].text[:1].isupper() and (title := _title_noun_gender(words[0].text, rules)):
            title_marks.append(sc.mark(words[0], title, EvidenceKind.LEXICAL, W_LEXICAL, Rule.GENDERED_NOUN))
            words = words[1:]
        if not words:
            continue
        ids = [w.i for w in words]
        head = _span_head(parsed, ids)
        marks = title_marks + honorifics_before(sc, head, ids)
        marks += np_marks(sc, head, noun_form=False)
        role, clause = _role_and_clause(parsed, head)
        marks += predicate_marks(sc, head, role, clause, zero=False)
        out.append(
            Mention(
                id=f"{sc.prefix}{head}",
                side=sc.side,
                seg=sc.seg,
                head=head,
                tokens=tuple(ids),
                kind=MentionKind.NAME,
                text=parsed.text[words[0].start : words[-1].end],
                start=words[0].start,
                end=words[-1].end,
                number="sing",
                person="3",
                role=role,
                clause=clause,
                key=name_key(" ".join(w.text for w in words)),
                marks=tuple(marks),
                sent=toks[head].sent,
            )
        )
        sc.claimed.update(ids)
    return out


def _noun_like(sc: SegmentSide) -> set[int]:
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    return {
        t.i
        for t in toks
        if rules.is_person_noun(t.text)
        and not is_plural(t)
        and not _noun_modifier(parsed, t, rules)
        and (t.text.lower() not in rules.title_only or _as_title(t, toks))
        and (
            t.upos in ("NOUN", "PROPN")
            or (t.i > 0 and article_form(toks[t.i - 1], rules) is not None)
            or (
                t.i > 1
                and toks[t.i - 1].upos == "ADJ"
                and article_form(toks[t.i - 2], rules) is not None
            )
        )
    }


def noun_mentions(sc: SegmentSide) -> list[Mention]:
    """Role and kinship nouns with their agreeing words, and singular forms marking no binary gender ("niñe",
    "l'étudiant·e": a person noun with a neutral mark)."""
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    out = []
    for t in toks:
        if t.i in sc.claimed:
            continue
        if t.i in sc.noun_like:
            out.append(_role_noun(sc, t))
        elif _neutral_word(parsed, t, rules) == "sing" and t.upos in ("NOUN", "PROPN"):
            role, clause = _role_and_clause(parsed, t.i)
            mark = sc.mark(t, Gender.NEUTRAL, EvidenceKind.MORPHOLOGY, W_LEXICAL, NEUTRAL_FORM_RULE)
            out.append(_noun_mention(sc, t, role, clause, t.text.lower(), [mark]))
        else:
            continue
        sc.claimed.add(t.i)
    return out


def _role_noun(sc: SegmentSide, t: Token) -> Mention:
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    gender, counterpart = rules.noun_counterpart(t.text)
    marks = []
    if gender == Gender.FEM or (gender == Gender.MASC and not rules.articles):
        # Languages without gendered articles (English) have only inherently gendered nouns here.
        marks.append(sc.mark(t, gender, EvidenceKind.LEXICAL, W_LEXICAL, Rule.GENDERED_NOUN))
    elif gender == Gender.MASC:
        rule = (
            Rule.GENERIC_MASCULINE_NOUN
            if t.text.lower() in rules.generic_masculine
            else Rule.MASCULINE_NOUN_FORM
        )
        marks.append(sc.mark(t, gender, EvidenceKind.LEXICAL, W_UNMARKED_NOUN, rule))
    marks += honorifics_before(sc, t.i, [t.i])
    marks += np_marks(sc, t.i, noun_form=True)
    if not any(mk.rule == Rule.DETERMINER_AGREEMENT for mk in marks) and t.i > 0:
        before = toks[t.i - 1]
        g = article_form(before, rules)
        if g in BINARY:
            marks.append(sc.mark(before, g, EvidenceKind.MORPHOLOGY, W_DETERMINER, Rule.DETERMINER_AGREEMENT))
    role, clause = _role_and_clause(parsed, t.i)
    marks += predicate_marks(sc, t.i, role, clause, zero=False)
    if gender == "epicene":
        marks = []  # grammatical gender only: "la persona" may be anyone
    masc_key = counterpart if gender == Gender.FEM else t.text.lower()
    return _noun_mention(sc, t, role, clause, masc_key, marks)


def pronoun_mentions(sc: SegmentSide) -> list[Mention]:
    """Personal, possessive and reflexive pronouns of the 3rd person (1st inside quotations), and
    demonstratives that take up a person ("esta dice", "cette dernière")."""
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    out = []
    for t in toks:
        if t.i in sc.claimed:
            continue
        # "cette dernière", "esta última" (the latter): a demonstrative's nominalised adjective takes up a
        # referent like a pronoun that may also stand for a thing. A demonstrative pronoun that says something
        # ("pero esta dice que...") is a person.
        speaker = _demonstrative_speaker(parsed, t, rules)
        if speaker or _latter(parsed, t, rules):
            out.append(_demonstrative(sc, t, speaker))
            continue
        # Not an article the tagger misread before a person noun.
        if t.i + 1 in sc.noun_like and rules.article_gender(t.text) is not None:
            continue
        m = _pronoun(sc, t)
        if m is not None:
            out.append(m)
    return out


def _demonstrative(sc: SegmentSide, t: Token, speaker: bool) -> Mention:
    role, clause = _role_and_clause(sc.parsed, t.i)
    marks = [sc.mark(t, t.gender, EvidenceKind.PRONOUN, W_PRONOUN if speaker else W_CLITIC,
                     Rule.DEMONSTRATIVE_SPEAKER if speaker else Rule.DEMONSTRATIVE_LATTER)]
    marks += predicate_marks(sc, t.i, role, clause, zero=False)
    return Mention(id=f"{sc.prefix}{t.i}", side=sc.side, seg=sc.seg, head=t.i, tokens=(t.i,),
                   kind=MentionKind.PRONOUN, text=t.text, start=t.start, end=t.end, number="sing", person="3",
                   pron_type="personal", role=role, clause=clause, key=t.text.lower(), marks=tuple(marks),
                   sent=t.sent, animate=speaker)


def _pronoun(sc: SegmentSide, t: Token, narrator: bool = False, addressee: bool = False) -> Mention | None:
    """The pronoun mention of token t, or None where t is no person pronoun here (with `narrator`, only a
    first-person singular pronoun outside quotations; with `addressee`, only a second-person one)."""
    rules, toks, parsed = sc.rules, sc.toks, sc.parsed
    neutral_form = (
        any(f.gender == Gender.NEUTRAL for f in rules.pronoun(t.text)) and t.deprel in NEUTRAL_PRONOUN_RELS
    )
    # An inverted subject clitic ("dit-elle", "a-t-il") is a pronoun and the subject of the verb before it,
    # whatever the tagger took it for.
    inverted_verb = _inverted_subject_of(parsed, t)
    inverted = inverted_verb >= 0 or (len(t.text) > 1 and t.text.startswith("-") and t.deprel.startswith("nsubj"))
    if not ((t.upos in ("PRON", "DET") or neutral_form or inverted) and rules.pronoun(t.text)):
        return None
    # Taggers often miss neopronouns and "elle" as pronouns: their relation in the clause decides.
    form = (_pick_pronoun_form(parsed, t, rules) if t.upos in ("PRON", "DET") or inverted
            else _neutral_form(t, rules))
    if form is not None and form.stressed and _after_preposition(parsed, t):
        form = replace(form, gender=form.stressed)
    singular_they = form is not None and form.number == "plur" and form.singular_neutral
    if form is None or (form.number == "plur" and not singular_they):
        return None
    if form.person == "1" and (t.i not in sc.quoted) != narrator:
        return None  # outside quotations "I" is the narrator, read by `narrator_mentions` alone
    if (form.person == "2") != addressee:
        return None  # the person addressed is read by `addressee_mentions` alone
    # An agreeing intensifier shows the person's gender even on an ungendered pronoun: "de sí misma",
    # "ella misma", "sé stessa".
    intensifiers = [k for k in parsed.children(t.i) if k.deprel == "amod" and k.upos in ("ADJ", "DET")
                    and k.gender in BINARY and not is_plural(k)]
    if form.type == "reflexive" and form.gender is None and not intensifiers:
        return None  # "se", "sí": mostly impersonal or passive markers, and never gendered
    if is_expletive(parsed, t, rules):
        return None
    if not form.animate and form.case in ("acc", "dat") and not _verb_clitic(parsed, t):
        return None  # "lo mismo", "lo que": the neuter article, not an object pronoun
    marks = []
    if singular_they:
        # Kept only where its chain has one named or singular antecedent (see singular_they_ok).
        marks.append(sc.mark(t, Gender.NEUTRAL, EvidenceKind.PRONOUN, W_PRONOUN, SINGULAR_THEY_RULE))
    elif form.gender and not _gender_doublet(parsed, t, rules):
        weight = W_PRONOUN if form.animate else W_CLITIC
        marks.append(sc.mark(t, form.gender, EvidenceKind.PRONOUN, weight, Rule.pronoun(form.type)))
    elif form.case == "acc" and (part := _participle_after_clitic(parsed, t)) is not None:
        # "l'ha descritta", "elle l'a vue": the participle shows the elided clitic's gender.
        marks.append(sc.mark(part, part.gender, EvidenceKind.AGREEMENT, W_CLITIC, Rule.OBJECT_CLITIC_PARTICIPLE))
    marks += [sc.mark(k, k.gender, EvidenceKind.AGREEMENT, W_ADJECTIVE, Rule.AGREEING_INTENSIFIER)
              for k in intensifiers]
    role, clause = _role_and_clause(parsed, t.i)
    if inverted_verb >= 0:
        verb = toks[inverted_verb]
        role = "nsubj"
        clause = verb.head if verb.deprel in CLAUSE_FUNCTION_RELS else verb.i
    if form.type == "possessive":
        clause = _governing_clause(parsed, t.i)
    if form.type == "personal":
        marks += predicate_marks(sc, t.i, role, clause, zero=False)
    return Mention(
        id=f"{sc.prefix}{t.i}",
        side=sc.side,
        seg=sc.seg,
        head=t.i,
        tokens=(t.i,),
        kind=MentionKind.PRONOUN,
        text=t.text,
        start=t.start,
        end=t.end,
        number=None if singular_they else form.number,
        person=form.person,
        pron_type=form.type,
        role=role,
        clause=clause,
        key=pronoun_key(t.text),
        marks=tuple(marks),
        sent=t.sent,
        animate=form.animate,
        case=form.case,
    )


def zero_subject_mentions(sc: SegmentSide) -> list[Mention]:
    """Zero subjects, in pro-drop languages only."""
    return _zero_subjects(sc) if sc.rules.pro_drop else []


def narrator_mentions(sc: SegmentSide) -> list[Mention]:
    """The narrator's mentions: first-person singular pronouns (subject, object, reflexive, possessive) and, in
    pro-drop languages, zero subjects of first-person singular verbs, all outside quotations, each with the
    predicates that agree with it ("estoy cansada", "me sentí orgullosa"). Inside a quotation the first
    person is the quoted speaker (`pronoun_mentions`, `zero_subject_mentions`)."""
    out = []
    for t in sc.toks:
        if t.i in sc.claimed or t.i in sc.quoted:
            continue
        if t.i + 1 in sc.noun_like and sc.rules.article_gender(t.text) is not None:
            continue
        m = _pronoun(sc, t, narrator=True)
        if m is not None and m.person == "1":
            out.append(m)
    if sc.rules.pro_drop:
        out += _zero_subjects(sc, narrator=True)
    return out


def addressee_mentions(sc: SegmentSide) -> list[Mention]:
    """The mentions of the person addressed: second-person pronouns ("you", "tú", "usted", "te", "tu") and, in
    pro-drop languages, zero subjects of second-person singular verbs ("¿estás lista?"), with the predicates
    that agree with them. Plural forms ("vosotras", "yourselves") are no one person."""
    out = []
    for t in sc.toks:
        if t.i in sc.claimed:
            continue
        m = _pronoun(sc, t, addressee=True)
        if m is not None and m.person == "2":
            out.append(m)
    if sc.rules.pro_drop:
        out += _zero_subjects(sc, addressee=True)
    return out


Extractor = Callable[[SegmentSide], list[Mention]]
# In this order: a name takes its words first, then nouns, then pronouns, so that no word makes two mentions.
EXTRACTORS: tuple[Extractor, ...] = (name_mentions, noun_mentions, pronoun_mentions, zero_subject_mentions,
                                     narrator_mentions, addressee_mentions)


SINGULAR_THEY_RULE = Rule.SINGULAR_THEY
NEUTRAL_FORM_RULE = Rule.NEUTRAL_FORM
# Relations in which a word the tagger did not call a pronoun still stands as one (UD; "pobj" is the English
# parser's prepositional object, which has no UD counterpart of its shape).
NEUTRAL_PRONOUN_RELS = {
    "nsubj",
    "nsubj:pass",
    "obj",
    "iobj",
    "obl",
    "pobj",
    "nmod:poss",
    "root",
    "conj",
    "appos",
    "expl",
    "dep",
    "compound",
}


def _neutral_form(t: Token, rules: LanguageRules):
    forms = [f for f in rules.pronoun(t.text) if f.gender == Gender.NEUTRAL]
    poss = t.deprel in ("nmod:poss", "det", "compound")  # "zir years": before the possessed noun
    return next((f for f in forms if (f.type == "possessive") == poss), forms[0] if forms else None)


def _neutral_word(parsed: ParsedText, t: Token, rules: LanguageRules) -> str | None:
    """The number (sing/plur) of a listed neutral word or a mid-dot form ("étudiant·e·s"), else None."""
    low = t.text.lower()
    if low in rules.neutral_words:
        return rules.neutral_words[low]
    if rules.neutral_midpoints and t.text[:1].isalpha():
        # The tokenizer may split at the midpoint: look at the whole run of letters and midpoints.
        text, a, b = parsed.text, t.start, t.start
        while a > 0 and (text[a - 1].isalpha() or text[a - 1] in rules.neutral_midpoints):
            a -= 1
        while b < len(text) and (text[b].isalpha() or text[b] in rules.neutral_midpoints):
            b += 1
        word = text[a:b]
        parts = [p for p in "".join("|" if c in rules.neutral_midpoints else c for c in word).split("|")]
        if len(parts) >= 2 and all(parts) and a == t.start:
            return "plur" if parts[-1].lower() in rules.neutral_plural_endings or len(parts) > 2 else "sing"
    return None


def neutral_forms(parsed: ParsedText, rules: LanguageRules) -> list[tuple[int, int, str, str]]:
    """Every form of the segment that deliberately marks no binary gender: (start, end, text, rule).

    Neutral pronouns (elle, iel, xe...), listed neutral words (todes, celleux), mid-dot forms (étudiant·e·s)
    and doubled forms joining a masculine and a feminine form ("los y las", "ciudadanos y ciudadanas").
    """
    toks, out = parsed.tokens, []
    for t in toks:
        if any(f.gender == Gender.NEUTRAL for f in rules.pronoun(t.text)):
            out.append((t.start, t.end, t.text, NeutralRule.PRONOUN))
        elif _neutral_word(parsed, t, rules):
            a, b = t.start, t.start
            text = parsed.text
            while b < len(text) and (text[b].isalpha() or text[b] in rules.neutral_midpoints):
                b += 1
            out.append((a, b, parsed.text[a:b], NEUTRAL_FORM_RULE))
    for t in toks:
        if t.text.lower() not in rules.neutral_doublet_conjunctions or not 0 < t.i < len(toks) - 1:
            continue
        a, b = toks[t.i - 1], toks[t.i + 1]
        if _counterparts(a.text.lower(), b.text.lower(), rules):
            out.append((a.start, b.end, parsed.text[a.start : b.end], NeutralRule.DOUBLED))
    return sorted(out)


def _counterparts(a: str, b: str, rules: LanguageRules) -> bool:
    """A masculine and a feminine form of one word, either order: articles, person nouns, or -o(s)/-a(s) and
    French -(s)/-e(s) inflections of one stem."""
    if a == b:
        return False
    for x, y in ((a, b), (b, a)):
        if rules.article_counterpart(x) == y:
            return True
        gx, gy = _form_gender(x, rules), _form_gender(y, rules)
        if {gx, gy} == BINARY and not rules.noun_genders.get(x) and not rules.noun_genders.get(y):
            return True  # "los y las", "el o la": determiners of both genders
        entry = rules.noun_genders.get(x)
        if entry and entry[0] == Gender.MASC and entry[1] == y:
            return True
        for m_end, f_end in (("os", "as"), ("o", "a"), ("s", "es"), ("", "e")):
            if len(x) > 3 and x.endswith(m_end) and y == x[: len(x) - len(m_end)] + f_end:
                return True
    return False


def _form_gender(form: str, rules: LanguageRules) -> str | None:
    """The gender of a determiner or pronoun form (either number), when it has exactly one."""
    genders = {rules.article_gender(form)} | {f.gender for f in rules.pronoun(form)}
    genders.discard(None)
    return genders.pop() if len(genders) == 1 else None


def singular_they_ok(m: Mention, chain: list[Mention], parses: list[ParsedText]) -> bool:
    """A 'they' mention is about one person when its chain holds a named or singular noun antecedent, no
    plural nominal subject and no coordinated persons stand between them (from the antecedent's sentence on),
    and (on the source side) the chain has no gendered pronoun of its own."""
    antecedents = [c for c in chain if c.kind in NOMINAL_KINDS and (c.seg, c.start) < (m.seg, m.start)]
    if not antecedents:
        return False
    a = antecedents[-1]
    for k in range(a.seg, m.seg + 1):
        for t in parses[k].tokens:
            if (k, t.start) >= (m.seg, m.start) or (k == a.seg and t.sent < parses[k].tokens[a.head].sent):
                continue  # from the antecedent's sentence up to the pronoun
            plural = t.upos in ("NOUN", "PROPN") and t.feat("Number") == "Plur"
            if plural and t.deprel in SUBJECT_RELS:
                return False  # "the engineers arrived": plural they is as likely
            if plural and any(c.deprel in RELATIVE_CLAUSE_RELS for c in parses[k].children(t.i)):
                return False  # "in photographs that looked as if they were old": they are the photographs
            if t.deprel == "conj" and t.upos in ("NOUN", "PROPN") and t.head == a.head and k == a.seg:
                return False  # "Ana and Luis ... they"
    if m.side == "source" and any(
        mk.kind == EvidenceKind.PRONOUN and mk.gender in BINARY for c in chain for mk in c.marks
    ):
        return False
    return True


def _quoted_tokens(parsed: ParsedText) -> set[int]:
    """Tokens between quotation marks (straight quotes toggle; curly and guillemets open and close)."""
    inside, out = False, set()
    for t in parsed.tokens:
        ch = t.text
        if ch == '"':
            inside = not inside
            continue
        if ch in ("“", "«", "„") and not inside:
            inside = True
            continue
        if ch in ("”", "»") and inside:
            inside = False
            continue
        if inside:
            out.add(t.i)
    return out


def is_expletive(parsed: ParsedText, t: Token, rules: LanguageRules) -> bool:
    """An impersonal subject ("il faut", "il y a", "il est probable que"): refers to no one.

    Decided from the verb and its complements only: parsers also label personal subjects as expletives.
    """
    if pronoun_key(t.text) not in rules.expletive_pronouns or t.is_root:
        return False
    head = parsed.tokens[t.head]
    kids = parsed.children(head.i)
    # A clausal complement proper: "il semble que...", "il reste à faire" (not an adverbial clause or participle).
    clausal = any(
        k.deprel in ("ccomp", "csubj") or (k.deprel == "xcomp" and k.feat("VerbForm") == "Inf") for k in kids
    )
    lemma = head.lemma.lower()
    if lemma in rules.expletive_verbs or (lemma in rules.expletive_clausal_verbs and clausal):
        return True
    if _impersonal_clitic(parsed, head, rules):
        return True
    # A modal or raising verb passes the impersonal subject of its infinitive up: "il doit y avoir", "il va
    # falloir", "il peut exister" (but "il doit y aller": he must go there).
    for k in kids:
        if k.deprel == "xcomp" and k.feat("VerbForm") == "Inf" and (
            k.lemma.lower() in rules.expletive_verbs or _impersonal_clitic(parsed, k, rules)
        ):
            return True
    if rules.expletive_copular_clause and any(k.deprel == "cop" for k in kids) and head.upos == "ADJ":
        return clausal
    return False


def _demonstrative_speaker(parsed: ParsedText, t: Token, rules: LanguageRules) -> bool:
    """A gendered singular demonstrative pronoun as the subject of a verb of saying ("esta dice", "questo ha
    detto"): things do not speak, so it refers back to a person."""
    return (
        t.upos == "PRON"
        and t.feat("PronType") == "Dem"
        and t.gender in BINARY
        and not is_plural(t)
        and t.deprel in SUBJECT_RELS
        and not t.is_root
        and parsed.tokens[t.head].lemma.lower() in rules.speech_verbs
    )


def _latter(parsed: ParsedText, t: Token, rules: LanguageRules) -> bool:
    """A word of `latter_words` heading its own phrase (not modifying a noun) with a demonstrative determiner,
    singular and with a gender: "cette dernière", "ce dernier", "esta última"."""
    return (
        t.text.lower() in rules.latter_words
        and t.upos in ("ADJ", "NOUN", "PRON")
        and not t.deprel.startswith(("amod", "det", "nmod", "compound"))
        and t.gender in BINARY
        and not is_plural(t)
        and any(k.deprel == "det" and k.i < t.i and k.feat("PronType") == "Dem" for k in parsed.children(t.i))
    )


def _inverted_subject_of(parsed: ParsedText, t: Token) -> int:
    """The verb an inverted subject clitic follows ("dit-elle", "a-t-il": the hyphenated form right after the
    verb, or after the euphonic "-t"), or -1."""
    if len(t.text) < 3 or not t.text.startswith("-") or t.i == 0:
        return -1
    k = t.i - 1
    if parsed.tokens[k].text.lower() in ("-t", "-t-") and k > 0:
        k -= 1
    before = parsed.tokens[k]
    return k if before.upos in ("VERB", "AUX") and before.sent == t.sent else -1


def _participle_after_clitic(parsed: ParsedText, t: Token) -> Token | None:
    """The singular past participle a preceding object clitic hangs on, where it shows a gender."""
    if t.is_root or not t.deprel.startswith("obj") or t.head < t.i:
        return None
    head = parsed.tokens[t.head]
    if head.participle and head.gender in BINARY and not is_plural(head):
        return head
    return None


def _impersonal_clitic(parsed: ParsedText, verb: Token, rules: LanguageRules) -> bool:
    """A verb with an impersonal clitic ("il y a"), where the rules name the verbs it makes impersonal."""
    if rules.expletive_clitic_verbs and verb.lemma.lower() not in rules.expletive_clitic_verbs:
        return False
    return any(k.text.lower() in rules.expletive_clitics for k in parsed.children(verb.i))


def _gender_doublet(parsed: ParsedText, t: Token, rules: LanguageRules) -> bool:
    """'he or she', 'il ou elle': a pronoun coordinated with its other-gender counterpart marks no gender."""
    mine = {f.gender for f in rules.pronoun(t.text)}
    partners = [parsed.tokens[t.head]] if t.deprel == "conj" and not t.is_root else []
    partners += [k for k in parsed.children(t.i) if k.deprel == "conj"]
    # "il ou elle", "he/she": parsers do not always build the coordination, so look at the words around.
    toks = parsed.tokens
    for a, b in ((t.i + 1, t.i + 2), (t.i - 1, t.i - 2)):
        if 0 <= b < len(toks) and (toks[a].upos == "CCONJ" or toks[a].text == "/"):
            partners.append(toks[b])
    for p in partners:
        theirs = {f.gender for f in rules.pronoun(p.text)}
        if theirs and not (theirs & mine) and None not in theirs:
            return True
    return False


def _noun_modifier(parsed: ParsedText, t: Token, rules: LanguageRules) -> bool:
    """A person-noun form used as a modifier of the thing noun right before it, with no determiner of its own:
    French "la ligne directrice", "l'idée maîtresse", Spanish "la idea madre". It agrees with that noun and
    names no one. After a person noun it is still a person ("la mujer policía"). The two words must hang
    together: the modifier on the noun, or the two with one function side by side (two subjects of one verb:
    the same phrase misread)."""
    if t.i == 0:
        return False
    before = parsed.tokens[t.i - 1]
    # A thing noun as the subject of the word right after it, with no copula between, is that misparse too.
    linked = t.head == before.i or (before.head == t.i and before.deprel.startswith("nsubj"))
    if not linked and (t.head != before.head or t.deprel != before.deprel):
        return False
    # Used as an adjective it agrees with the noun in gender and number: "la ligne directrice", but "depuis des
    # années directrice", "hace años directora" are a time phrase and a person.
    return (
        before.upos == "NOUN"
        and not rules.is_person_noun(before.text)
        and before.gender == t.gender
        and not is_plural(before)
        and not any(k.deprel.startswith("det") for k in parsed.children(t.i))
    )


def _noun_mention(sc: SegmentSide, t: Token, role: str, clause: int, key: str, marks) -> Mention:
    """A singular person noun of one token."""
    return Mention(
        id=f"{sc.prefix}{t.i}", side=sc.side, seg=sc.seg, head=t.i, tokens=(t.i,), kind=MentionKind.NOUN, text=t.text,
        start=t.start, end=t.end, number="sing", person="3", role=role, clause=clause, key=key, marks=tuple(marks),
        sent=t.sent,
    )


def _after_preposition(parsed: ParsedText, t: Token) -> bool:
    """Whether a pronoun is the object of a preposition ("chez lui"): a case dependent, or an adposition right
    before it and no verb right after (a clitic stands before its verb: "en lui parlant")."""
    toks = parsed.tokens
    if t.i + 1 < len(toks) and toks[t.i + 1].upos in ("VERB", "AUX"):
        return False
    if any(k.deprel == "case" for k in parsed.children(t.i)):
        return True
    return t.i > 0 and toks[t.i - 1].upos == "ADP" and toks[t.i - 1].sent == t.sent


def _pick_pronoun_form(parsed: ParsedText, t: Token, rules: LanguageRules):
    forms = rules.pronoun(t.text)
    if t.upos == "DET" and not any(f.type == "possessive" for f in forms) and not (
        t.i < t.head and _verb_clitic(parsed, t)
    ):
        return None  # "la", "le", "el" as articles (but "je la connais": an object before its verb)
    # Where the parse gives the token's own number, prefer the reading that has it (German "sie": sing/plur).
    number = {"Sing": "sing", "Plur": "plur"}.get(t.feat("Number") or "")
    if number and t.feat("Poss") != "Yes":
        fitting = tuple(f for f in forms if f.number in (number, None))
        forms = fitting or forms
    poss = t.feat("Poss") == "Yes" or t.deprel == "nmod:poss"
    wanted = "possessive" if poss else None
    for f in forms:
        if wanted and f.type == wanted:
            return f
    for f in forms:
        if not wanted and f.type != "possessive":
            return f
    return forms[0]


def _span_head(parsed: ParsedText, ids: list[int]) -> int:
    inside = set(ids)
    for i in ids:
        if parsed.tokens[i].head not in inside or parsed.tokens[i].is_root:
            return i
    return ids[-1]


def _role_and_clause(parsed: ParsedText, i: int) -> tuple[str, int]:
    """The mention's relation in its clause and the clause head (climbing name-internal and appositive links,
    and through the preposition of an English prepositional object, which ClearNLP attaches to the preposition)."""
    t = parsed.tokens[i]
    seen = 0
    while t.deprel in NAME_LINK_RELS and not t.is_root and seen < 4:
        h = parsed.tokens[t.head]
        if h.upos not in ("PROPN", "NOUN"):
            break
        t = h
        seen += 1
    if t.deprel in ("pobj", "agent") and not t.is_root:
        prep = parsed.tokens[t.head]
        if prep.deprel in ("prep", "agent") and not prep.is_root:
            return ("obl", prep.head)
    return t.deprel, (t.i if t.is_root else t.head)


def _verb_clitic(parsed: ParsedText, t: Token) -> bool:
    """An object clitic depends on a verb as its object."""
    head = parsed.head_of(t.i)
    return (
        head is not None and head.upos in ("VERB", "AUX") and t.deprel in ("obj", "iobj", "expl", "expl:pv")
    )


def _governing_clause(parsed: ParsedText, i: int) -> int:
    """The nearest ancestor that heads a clause (a verb, or a word with a subject or copula below it)."""
    t = parsed.tokens[i]
    for _ in range(6):
        if t.is_root:
            return t.i
        t = parsed.tokens[t.head]
        kids = parsed.children(t.i)
        if t.upos in ("VERB", "AUX") or any(k.deprel in ("nsubj", "nsubj:pass", "cop") for k in kids):
            return t.i
    return t.i


def _as_title(t, toks) -> bool:
    """Whether a noun stands as a title: before a name ("Count Orsolani"), or capitalised inside a sentence."""
    nxt = toks[t.i + 1] if t.i + 1 < len(toks) else None
    if nxt is not None and nxt.upos == "PROPN" and nxt.sent == t.sent:
        return True
    return t.text[:1].isupper() and t.i > 0 and toks[t.i - 1].sent == t.sent


def _title_noun_gender(form: str, rules: LanguageRules) -> str | None:
    """The gender a person noun shows by its form alone (a feminine form, or a masculine one in a language
    without gendered articles, as "king"); None for other words, common and epicene nouns and masculine forms
    that are also generic."""
    entry = rules.noun_counterpart(form)
    if entry is None:
        return None
    gender = entry[0]
    if gender == Gender.FEM or (gender == Gender.MASC and not rules.articles
                                and form.lower() not in rules.generic_masculine):
        return gender
    return None


def _neuter_demonstrative(parsed: ParsedText, k: Token) -> bool:
    """A demonstrative pronoun with no gender ("eso", "esto") hanging on a clause as no object and with no
    preposition: a thing or a situation that stands as the clause's subject."""
    return (k.upos == "PRON" and k.feat("PronType") == "Dem" and k.feat("Gender") is None
            and k.deprel not in ("obj", "iobj") and not any(c.deprel == "case" for c in parsed.children(k.i)))


def _zero_subjects(sc: SegmentSide, narrator: bool = False, addressee: bool = False) -> list[Mention]:
    """Finite 3rd-person singular clauses with no overt subject (pro-drop languages), and 1st-person singular
    ones inside quotations (the speaker: "«Estoy cansada», dijo"); with `narrator`, only the 1st-person
    singular ones outside quotations (the narrator: "Estoy cansada"); with `addressee`, only the 2nd-person
    singular ones ("¿Estás lista?")."""
    parsed, rules, quoted = sc.parsed, sc.rules, sc.quoted
    out = []
    toks = parsed.tokens
    for t in toks:
        # Relative clauses count: "donde era la responsable" has a zero subject; "que estaba..." has "que".
        if t.deprel in ("cop", "aux", "aux:pass", "aux:tense", "amod", "case", "mark", "det"):
            continue
        kids = parsed.children(t.i)
        finite = None
        if t.upos in ("VERB", "AUX") and t.finite:
            finite = t
        else:
            for k in kids:
                if k.deprel in ("cop", "aux", "aux:pass") and k.finite:
                    finite = k
                    break
        if finite is None or finite.feat("Number") != "Sing":
            continue
        person = finite.feat("Person")
        if addressee:
            if person != "2":
                continue
        elif narrator:
            if person != "1" or finite.i in quoted:
                continue
        elif person != "3" and not (person == "1" and finite.i in quoted):
            continue
        if any(k.deprel in SUBJECT_LIKE_RELS for k in kids):
            continue
        if any(_neuter_demonstrative(parsed, k) for k in kids):
            continue  # "¿no es eso incorrecto?": the parser missed the neuter demonstrative subject
        lemma = (finite.lemma if finite is t else t.lemma).lower()
        if lemma in rules.subjectless_verbs and finite is t:
            continue  # existential "hay", weather "hace frío": no subject at all
        if any(k.text.lower() == "se" and k.deprel != "obj" for k in kids):
            continue  # impersonal or passive "se": the clause has no person subject
        marks = predicate_marks(sc, -1, "nsubj", t.i, zero=True)
        out.append(
            Mention(
                id=f"{sc.prefix}z{t.i}",
                side=sc.side,
                seg=sc.seg,
                head=t.i,
                tokens=(finite.i,),
                kind=MentionKind.ZERO,
                text=finite.text,
                start=finite.start,
                end=finite.end,
                number="sing",
                person=person,
                role="nsubj",
                clause=t.i,
                key="",
                marks=tuple(marks),
                sent=finite.sent,
            )
        )
    return out
