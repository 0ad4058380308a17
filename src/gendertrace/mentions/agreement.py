"""Gender marks that agreement puts on a person: honorifics and the determiners and adjectives of the noun
phrase (`np_marks`), and the predicates of the person's clause (`predicate_marks`), with the weights of every
kind of mark (rules/scoring/weights.yaml, section "evidence")."""

from __future__ import annotations

from dataclasses import dataclass, field

from gendertrace.mentions.segment import SegmentSide
from gendertrace.model import EvidenceItem, ParsedText, Token
from gendertrace.rules import LanguageRules
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import BINARY, SUBJECT_RELS, EvidenceKind, Gender, Rule

# Weights of the kinds of marks: rules/scoring/weights.yaml, section "evidence".
W_PRONOUN = WEIGHTS.evidence.pronoun
W_CLITIC = WEIGHTS.evidence.clitic
W_TITLE = WEIGHTS.evidence.title
W_LEXICAL = WEIGHTS.evidence.lexical
W_UNMARKED_NOUN = WEIGHTS.evidence.unmarked_noun
W_DETERMINER = WEIGHTS.evidence.determiner
W_ADJECTIVE = WEIGHTS.evidence.adjective
W_PREDICATE = WEIGHTS.evidence.predicate
W_ZERO_MASC_PREDICATE = WEIGHTS.evidence.zero_masc_predicate


def is_plural(tok: Token) -> bool:
    """Whether the parse gives the word plural number."""
    return tok.feat("Number") == "Plur"


def article_form(tok: Token, rules: LanguageRules) -> str | None:
    """The gender of an article form, unless the tagger shows the word is a bare preposition of the same
    shape (Portuguese "a": "promovido a presidente"); a preposition fused with an article keeps its gender."""
    g = rules.article_gender(tok.text)
    if g is not None and tok.upos == "ADP" and not (tok.feat("AdpType") == "Preppron"
                                                     or tok.feat("PronType") == "Art"):
        return None
    return g


def honorifics_before(sc: SegmentSide, head: int, ids: list[int]) -> list[EvidenceItem]:
    """Honorifics hanging on a name or person noun (or heading it), as title marks."""
    parsed, rules = sc.parsed, sc.rules
    marks = []
    for c in parsed.children(head):
        if c.i in ids:
            continue
        g = rules.honorific(c.text)
        if g and c.deprel in ("compound", "flat", "flat:name", "appos", "nmod", "det", "amod") and c.i < head:
            marks.append(sc.mark(c, g, EvidenceKind.TITLE, W_TITLE, Rule.HONORIFIC))
    # "el señor García": the honorific may be the head with the name under it.
    # Not across a coordination ("el señor Ruiz y la jefa Ana Gil": señor is not Ana Gil's title).
    h = parsed.head_of(head)
    if h is not None and h.i < head and rules.honorific(h.text) and parsed.tokens[head].deprel in (
        "flat", "flat:name", "appos", "compound", "nmod", "nmod:appos"
    ):
        marks.append(sc.mark(h, rules.honorific(h.text), EvidenceKind.TITLE, W_TITLE, Rule.HONORIFIC))
    return marks


def np_marks(sc: SegmentSide, head: int, noun_form: bool) -> list[EvidenceItem]:
    """Determiners and adjectives inside the noun phrase that agree with a person noun or name."""
    parsed, rules = sc.parsed, sc.rules
    if not rules.dependents:
        return []
    marks = []
    for c in parsed.children(head):
        if c.deprel == "case" and c.i < head and not is_plural(c) and rules.article_gender(c.text):
            # A preposition fused with the article ("del propio director", "au directeur") carries its gender;
            # a bare preposition of the same form (Portuguese "a") does not (see article_form).
            g = article_form(c, rules)
            if g in BINARY and c.upos == "ADP":
                marks.append(sc.mark(c, g,
                                   EvidenceKind.MORPHOLOGY, W_DETERMINER, Rule.DETERMINER_AGREEMENT))
            continue
        if c.deprel not in rules.dependents or is_plural(c):
            continue
        if c.feat("Poss") == "Yes" or rules.pronoun(c.text) and c.upos == "PRON":
            continue  # possessives agree with the possessed noun, not with the person (rules: possessed)
        if c.deprel.startswith("det"):
            g = rules.article_gender(c.text)
            if g is None and c.upos == "DET":
                g = c.gender  # any determiner agrees with its noun: articles, demonstratives, "propio", "otro"
            if g in BINARY and c.i < head:
                marks.append(
                    sc.mark(c, g, EvidenceKind.MORPHOLOGY, W_DETERMINER, Rule.DETERMINER_AGREEMENT)
                )
        elif c.upos in ("ADJ", "VERB") and c.gender in BINARY:
            lo, hi = sorted((c.i, head))
            if any(parsed.tokens[j].upos in ("NOUN", "PROPN") for j in range(lo + 1, hi)):
                continue  # a noun in between: the adjective more likely goes with that noun
            if c.gender == Gender.MASC and not noun_form:
                continue  # an adjective on a bare name: too often an unrelated modifier
            marks.append(
                sc.mark(c, c.gender, EvidenceKind.AGREEMENT, W_ADJECTIVE, Rule.ADJECTIVE_AGREEMENT)
            )
    return marks


def _partitive_gender(parsed, pred: Token, rules) -> str | None:
    """The gender of a partitive predicate's head: a gendered article form ("una", "l'une"), or an indefinite
    pronoun the tagger genders with a plural group under it (Spanish "uno de mis amigos": not an article)."""
    g = rules.article_gender(pred.text)
    if g is None and pred.upos == "PRON" and pred.feat("PronType") == "Ind" and any(
        c.deprel.startswith(("nmod", "obl")) and is_plural(c) for c in parsed.children(pred.i)
    ):
        g = pred.gender
    return g if g in BINARY else None


@dataclass
class _PredicateMarks:
    """The agreement marks the predicates of one clause put on its subject, gathered by the functions below."""

    sc: SegmentSide
    zero: bool  # the subject is a zero subject: its masculine agreement counts for less
    pred: Token  # the clause head
    kids: list[Token]
    marks: list[EvidenceItem] = field(default_factory=list)

    @property
    def has_cop(self) -> bool:
        return any(k.deprel == "cop" for k in self.kids)

    def add(self, tok: Token, rule: str) -> None:
        """A mark on `tok` where its form agrees in gender and is singular (a person noun by its own gender)."""
        rules = self.sc.rules
        if not tok.text[:1].isalpha():
            return  # a misparse made punctuation the predicate
        g = tok.gender
        # Ending-based gender is for adjectives and participles: a finite verb ("empieza", "ruego") has none.
        if (tok.upos == "ADJ" or (tok.upos == "VERB" and tok.participle)) and rules.endings:
            matched, by_ending = rules.ending_gender(tok.text)
            if matched:
                g = by_ending
        if g not in BINARY or is_plural(tok):
            return
        if tok.upos in ("NOUN", "PROPN"):
            if not rules.is_person_noun(tok.text):
                return  # "es un problema": a thing's grammatical gender
            ng = rules.noun_counterpart(tok.text)[0]
            if ng not in BINARY:
                return
            g = ng
            if g == Gender.MASC and tok.text.lower() in rules.generic_masculine:
                self.marks.append(
                    self.sc.mark(tok, g, EvidenceKind.LEXICAL, W_UNMARKED_NOUN, Rule.GENERIC_MASCULINE_NOUN)
                )
                return
        weight = W_ZERO_MASC_PREDICATE if self.zero and g == Gender.MASC else W_PREDICATE
        self.marks.append(self.sc.mark(tok, g, EvidenceKind.AGREEMENT, weight, rule))


def predicate_marks(sc: SegmentSide, i: int, role: str, clause: int, zero: bool) -> list[EvidenceItem]:
    """Predicative adjectives, nouns and participles that agree with the subject of their clause."""
    rules = sc.rules
    if role not in SUBJECT_RELS and not zero:
        return []
    if not rules.copulas and not rules.agreeing_aux:
        return []
    if clause < 0 or clause == i:
        return []
    pm = _PredicateMarks(sc, zero, sc.parsed.tokens[clause], sc.parsed.children(clause))
    for gather in (_main_predicate, _participle_copula, _coordinated_predicates, _secondary_predicates,
                   _controlled_participles):
        gather(pm)
    return pm.marks


def _main_predicate(pm: _PredicateMarks) -> None:
    """The clause head: with a copula, or a participle under an agreeing or passive auxiliary."""
    parsed, rules, pred, kids = pm.sc.parsed, pm.sc.rules, pm.pred, pm.kids
    aux_lemmas = {k.lemma.lower() for k in kids if k.deprel in ("aux", "aux:pass", "aux:tense", "cop")}
    has_cop = pm.has_cop
    has_pass = any(k.deprel == "aux:pass" for k in kids)
    if has_cop and pred.upos in ("ADJ", "NOUN", "VERB"):
        pm.add(pred, Rule.PREDICATIVE_WITH_COPULA)
    elif has_cop and pred.upos in ("PRON", "NUM", "DET") and (g := _partitive_gender(parsed, pred, rules)):
        # Partitive predicates agree with the subject: "es una de las pocas pilotos", "l'une des rares",
        # "es uno de mis amigos".
        pm.marks.append(pm.sc.mark(pred, g, EvidenceKind.AGREEMENT, W_PREDICATE, Rule.PREDICATIVE_WITH_COPULA))
    elif pred.upos in ("VERB", "ADJ") and pred.participle:
        # An agreeing auxiliary makes the participle agree even under a compound tense ("ha sido elegida",
        # "a été élue"); with only the compound-tense auxiliary it is invariable ("ha operado", "a opéré").
        if has_pass or aux_lemmas & rules.agreeing_aux:
            pm.add(pred, Rule.PARTICIPLE_WITH_AGREEING_AUX)


def _participle_copula(pm: _PredicateMarks) -> None:
    """A copula that is itself a participle, under an auxiliary that makes participles agree."""
    rules, kids = pm.sc.rules, pm.kids
    has_cop = pm.has_cop
    # A copula that is itself a participle agrees where its auxiliary makes participles agree: Italian "è
    # stata gentile" (essere takes essere: the participle agrees with the subject), not Spanish "ha sido".
    if has_cop:
        for k in kids:
            if (
                k.deprel == "cop"
                and k.participle
                and any(a.deprel in ("aux", "aux:pass") and a.lemma.lower() in rules.agreeing_aux
                        for a in kids)
            ):
                pm.add(k, Rule.PARTICIPLE_WITH_AGREEING_AUX)


def _coordinated_predicates(pm: _PredicateMarks) -> None:
    """Predicates coordinated with one already marked."""
    parsed, rules, pred, kids = pm.sc.parsed, pm.sc.rules, pm.pred, pm.kids
    # Coordinated predicates agree with the same subject ("cansada pero muy satisfecha"); a conjunct with a
    # subject of its own is another clause, and a participle under the compound-tense auxiliary is invariable
    # ("segura, pero los poderes habían comenzado").
    if pm.marks and pred.upos in ("ADJ", "VERB"):
        for k in kids:
            own = parsed.children(k.i) if k.deprel == "conj" else ()
            if (
                k.deprel == "conj"
                and k.upos in ("ADJ", "VERB")
                and (k.upos == "ADJ" or k.participle)
                and not any(d.deprel.startswith("nsubj") for d in own)
                and not any(d.deprel in ("aux", "aux:tense") and d.lemma.lower() in rules.invariable_aux
                            for d in own)
            ):
                pm.add(k, Rule.PREDICATIVE_WITH_COPULA)


def _secondary_predicates(pm: _PredicateMarks) -> None:
    """Adjectives hanging on the verb itself that describe its subject."""
    parsed, rules, pred, kids = pm.sc.parsed, pm.sc.rules, pm.pred, pm.kids
    # Secondary predicates ("quedó sorprendida", "se mostró convencida", "declaró emocionada"): an adjective
    # hanging on the verb itself describes the subject, unless the verb has a nominal object it could describe.
    if pred.lemma.lower() in rules.copulas:
        for k in kids:
            if (
                k.deprel == "xcomp"
                and k.upos in ("ADJ", "VERB")
                and (k.upos == "ADJ" or k.participle)
            ) or (k.deprel == "obj" and k.upos == "ADJ" and not _heads_clause(parsed, k)):
                # An adjective is never a direct object: taggers label the predicative one so ("me sentí
                # orgullosa", "se quedó dormida").
                pm.add(k, Rule.SECONDARY_PREDICATE)
    elif pred.upos == "VERB" and not any(
        k.deprel in ("obj", "iobj") and k.upos in ("NOUN", "PROPN", "PRON") and k.feat("Reflex") != "Yes"
        for k in kids  # the clitic of a pronominal verb is no object: "me quedé dormida", "se sintió sola"
    ):
        for k in kids:
            if (
                k.upos == "ADJ"
                and k.deprel in ("xcomp", "advcl", "obj", "conj", "dep", "obl")
                and not rules.is_person_noun(k.text)
                # An adjective with its own determiner is a noun; with its own subject or copula it heads a
                # clause of its own ("« Je suis désolé », dit-elle").
                and not any(d.deprel == "det" or d.deprel == "cop" or d.deprel.startswith("nsubj")
                            for d in parsed.children(k.i))
            ):
                pm.add(k, Rule.SECONDARY_PREDICATE)


def _heads_clause(parsed: ParsedText, k: Token) -> bool:
    """An adjective with its own determiner (a noun), subject or copula (a clause of its own)."""
    return any(d.deprel in ("det", "cop") or d.deprel.startswith("nsubj") for d in parsed.children(k.i))


def _controlled_participles(pm: _PredicateMarks) -> None:
    """Participles of subjectless non-finite clauses under an agreeing auxiliary, controlled by the subject."""
    parsed, rules, kids = pm.sc.parsed, pm.sc.rules, pm.kids
    # A participle heading a non-finite adjunct or complement with no subject of its own, under an agreeing
    # auxiliary, agrees with the subject that controls it ("dopo essersi offerto", "après être arrivée", "tras
    # ser elegida").
    for k in kids:
        if k.deprel not in ("advcl", "xcomp") or not k.participle:
            continue
        own = parsed.children(k.i)
        auxes = [d for d in own if d.deprel in ("aux", "aux:pass", "aux:tense")]
        if (auxes and not any(d.finite for d in auxes)
                and any(d.lemma.lower() in rules.agreeing_aux for d in auxes)
                and not any(d.deprel.startswith("nsubj") for d in own)):
            pm.add(k, Rule.CONTROLLED_CLAUSE_PARTICIPLE)
