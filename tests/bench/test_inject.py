"""The gender-error injector on small invented treebanks, with fake rules (and once the real rules)."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import pytest
from treebank_helpers import Sent

from gendertrace.bench.inject import InjectedCopy, copy_document, inject_corpus, inject_document
from gendertrace.bench.pud import PudDocument, load_pud_pair

# Gold feature bundles in UD notation, as the parallel UD treebanks write them (UD guidelines, feature pages).
HE = "Case=Nom|Gender=Masc|Number=Sing|Person=3|PronType=Prs"
SHE = "Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs"
HIM = "Case=Acc|Gender=Masc|Number=Sing|Person=3|PronType=Prs"
HER_ACC = "Case=Acc|Gender=Fem|Number=Sing|Person=3|PronType=Prs"
HER_POSS = "Gender=Fem|Number=Sing|Person=3|Poss=Yes|PronType=Prs"
HIS = "Gender=Masc|Number=Sing|Person=3|Poss=Yes|PronType=Prs"
HIMSELF = "Case=Acc|Gender=Masc|Number=Sing|Person=3|PronType=Prs|Reflex=Yes"
IT = "Case=Nom|Gender=Neut|Number=Sing|Person=3|PronType=Prs"
THEY = "Case=Nom|Number=Plur|Person=3|PronType=Prs"
STRONG_M = "Gender=Masc|Number=Sing|Person=3|PronType=Prs"  # él, il, lui
STRONG_F = "Gender=Fem|Number=Sing|Person=3|PronType=Prs"  # ella, elle
MS, FS, MP = "Gender=Masc|Number=Sing", "Gender=Fem|Number=Sing", "Gender=Masc|Number=Plur"
DEF_M = "Definite=Def|Gender=Masc|Number=Sing|PronType=Art"
DEF_F = "Definite=Def|Gender=Fem|Number=Sing|PronType=Art"
IND_M = "Definite=Ind|Gender=Masc|Number=Sing|PronType=Art"
DEF_MP = "Definite=Def|Gender=Masc|Number=Plur|PronType=Art"
DEM_F = "Gender=Fem|Number=Sing|PronType=Dem"
PART_M = "Gender=Masc|Number=Sing|VerbForm=Part"
PART_F = "Gender=Fem|Number=Sing|VerbForm=Part"
ADJ_F = "Gender=Fem|Number=Sing"

# A sentence that says nothing about anyone, for the side a test does not look at.
NEUTRAL = {
    "en": ("It rained.", "1 It PRON " + IT + " 2 expl\n2 rained VERB _ 0 root\n3 . PUNCT _ 2 punct"),
    "es": ("Llovió.", "1 Llovió VERB _ 0 root\n2 . PUNCT _ 1 punct"),
}


@dataclass(frozen=True)
class FakeRules:
    """The two look-ups of the rules interface the injector uses (duck typing), plus agreeing auxiliaries."""

    nouns: dict[str, tuple[str, str]]
    articles: dict[str, str]
    agreeing_aux: frozenset[str] = field(default_factory=frozenset)

    def noun_counterpart(self, form: str) -> tuple[str, str] | None:
        return self.nouns.get(form.lower())

    def article_counterpart(self, form: str) -> str | None:
        return self.articles.get(form.lower())


def pairs(*words: tuple[str, str, str]) -> dict[str, tuple[str, str]]:
    out: dict[str, tuple[str, str]] = {}
    for masc, fem, kind in words:
        if kind == "common":
            out[masc] = ("common", masc)
        else:
            out[masc], out[fem] = ("masc", fem), ("fem", masc)
    return out


ES = FakeRules(
    pairs(("ministro", "ministra", "pair"), ("director", "directora", "pair"), ("periodista", "", "common")),
    {"el": "la", "la": "el", "un": "una", "una": "un"},
    frozenset({"ser", "estar"}),
)
FR = FakeRules(
    pairs(
        ("roi", "reine", "pair"),
        ("avocat", "avocate", "pair"),
        ("acteur", "actrice", "pair"),
        ("journaliste", "", "common"),
        ("artiste", "", "common"),
    ),
    {"le": "la", "la": "le", "un": "une", "une": "un", "cette": "ce", "ce": "cette"},
)
EN = FakeRules(pairs(("father", "mother", "pair")), {})


def make_doc(
    treebanks, src: str, tgt: str, sentences: list[tuple[tuple[str, str], tuple[str, str]]]
) -> PudDocument:
    """One document of sentence pairs ((source text, rows), (target text, rows)), written and read back."""
    by_lang: dict[str, list[Sent]] = {src: [], tgt: []}
    for k, (source, target) in enumerate(sentences, 1):
        newdoc = "d1" if k == 1 else None
        by_lang[src].append(Sent(f"s{k}", source[0], source[1], newdoc))
        by_lang[tgt].append(Sent(f"s{k}", target[0], target[1], newdoc))
    (doc,) = load_pud_pair(treebanks(**by_lang), src, tgt)
    return doc


def assert_single_span(copy: InjectedCopy, doc: PudDocument) -> None:
    """The copy differs from the original in exactly the reported span, and nowhere else."""
    old = doc.pairs[copy.sentence].target.text
    new = copy.target_texts[copy.sentence]
    assert new[copy.start : copy.end] == copy.new_text
    assert old[copy.orig_start : copy.orig_end] == copy.original
    assert copy.start == copy.orig_start
    assert new[: copy.start] == old[: copy.orig_start] and new[copy.end :] == old[copy.orig_end :]
    assert copy.new_text != copy.original
    others = [t for k, t in enumerate(copy.target_texts) if k != copy.sentence]
    assert others == [p.target.text for k, p in enumerate(doc.pairs) if k != copy.sentence]


def only(copies: list[InjectedCopy]) -> InjectedCopy:
    assert len(copies) == 1, [c.new_text for c in copies]
    return copies[0]


# ------------------------------------------------------------------------------------------------------------
# English target


def english(treebanks, text: str, rows: str, source: tuple[str, str] = NEUTRAL["es"]) -> PudDocument:
    return make_doc(treebanks, "es", "en", [(source, (text, rows))])


def test_he_becomes_she_with_its_capital(treebanks):
    doc = english(
        treebanks,
        "He left early.",
        f"1 He PRON {HE} 2 nsubj\n2 left VERB _ 0 root\n3 early ADV _ 2 advmod\n4 . PUNCT _ 2 punct",
    )
    copy = only(inject_document(doc, "en", EN))
    assert copy.target_texts == ("She left early.",)
    assert (copy.original, copy.new_text, copy.start, copy.end) == ("He", "She", 0, 3)
    assert (copy.original_gender, copy.injected_gender, copy.kind) == ("masc", "fem", "pronoun")
    assert (copy.doc_id, copy.copy_id, copy.sent_id) == ("d1", "d1#1", "s1")
    assert_single_span(copy, doc)


def test_a_word_in_capitals_stays_in_capitals(treebanks):
    doc = english(
        treebanks, "SHE WON.", f"1 SHE PRON {SHE} 2 nsubj\n2 WON VERB _ 0 root\n3 . PUNCT _ 2 punct"
    )
    assert only(inject_document(doc, "en", EN)).target_texts == ("HE WON.",)


def test_object_her_becomes_him(treebanks):
    doc = english(
        treebanks,
        "We saw her.",
        "1 We PRON Case=Nom|Number=Plur|Person=1|PronType=Prs 2 nsubj\n"
        f"2 saw VERB _ 0 root\n3 her PRON {HER_ACC} 2 obj\n4 . PUNCT _ 2 punct",
    )
    copy = only(inject_document(doc, "en", EN))
    assert (copy.new_text, copy.target_texts) == ("him", ("We saw him.",))
    assert_single_span(copy, doc)


def test_possessive_her_becomes_his(treebanks):
    doc = english(
        treebanks,
        "Her dog barked.",
        f"1 Her PRON {HER_POSS} 2 nmod:poss\n2 dog NOUN Number=Sing 3 nsubj\n"
        "3 barked VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert only(inject_document(doc, "en", EN)).target_texts == ("His dog barked.",)


def test_her_with_neither_case_nor_possession_is_skipped(treebanks):
    doc = english(
        treebanks,
        "We saw her.",
        "1 We PRON Case=Nom|Number=Plur|Person=1|PronType=Prs 2 nsubj\n"
        f"2 saw VERB _ 0 root\n3 her PRON {STRONG_F} 2 obj\n4 . PUNCT _ 2 punct",
    )
    assert inject_document(doc, "en", EN) == []


def test_his_before_a_noun_becomes_her(treebanks):
    doc = english(
        treebanks,
        "His dog barked.",
        f"1 His PRON {HIS} 2 nmod:poss\n2 dog NOUN Number=Sing 3 nsubj\n"
        "3 barked VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert only(inject_document(doc, "en", EN)).target_texts == ("Her dog barked.",)


def test_his_standing_alone_becomes_hers(treebanks):
    doc = english(
        treebanks,
        "The dog is his.",
        "1 The DET Definite=Def|PronType=Art 2 det\n"
        f"2 dog NOUN Number=Sing 4 nsubj\n3 is AUX _ 4 cop\n4 his PRON {HIS} 0 root\n5 . PUNCT _ 4 punct",
    )
    assert only(inject_document(doc, "en", EN)).target_texts == ("The dog is hers.",)


def test_reflexive_and_subject_give_one_copy_each(treebanks):
    doc = english(
        treebanks,
        "He hurt himself.",
        f"1 He PRON {HE} 2 nsubj\n2 hurt VERB _ 0 root\n3 himself PRON {HIMSELF} 2 obj\n4 . PUNCT _ 2 punct",
    )
    copies = inject_document(doc, "en", EN)
    assert [c.target_texts[0] for c in copies] == ["She hurt himself.", "He hurt herself."]
    assert [c.copy_id for c in copies] == ["d1#1", "d1#2"]
    for copy in copies:
        assert_single_span(copy, doc)


def test_plural_and_neuter_pronouns_are_no_sites(treebanks):
    doc = english(
        treebanks,
        "They saw it.",
        f"1 They PRON {THEY} 2 nsubj\n2 saw VERB _ 0 root\n"
        "3 it PRON Case=Acc|Gender=Neut|Number=Sing|Person=3|PronType=Prs 2 obj\n4 . PUNCT _ 2 punct",
    )
    assert inject_document(doc, "en", EN) == []


def test_pronoun_opening_a_multiword_token_is_flipped_as_a_prefix(treebanks):
    doc = english(
        treebanks,
        "He'd go.",
        f"1-2 He'd\n1 He PRON {HE} 3 nsubj\n2 'd AUX _ 3 aux\n3 go VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    copy = only(inject_document(doc, "en", EN))
    assert copy.target_texts == ("She'd go.",)
    assert (copy.start, copy.end) == (0, 3)
    assert_single_span(copy, doc)


# ------------------------------------------------------------------------------------------------------------
# Spanish target


def spanish(treebanks, text: str, rows: str, source: tuple[str, str] = NEUTRAL["en"]) -> PudDocument:
    return make_doc(treebanks, "en", "es", [(source, (text, rows))])


def test_el_ministro_becomes_la_ministra(treebanks):
    doc = spanish(
        treebanks,
        "El ministro habló.",
        f"1 El DET {DEF_M} 2 det\n2 ministro NOUN {MS} 3 nsubj\n3 habló VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("La ministra habló.",)
    assert (copy.original, copy.new_text, copy.start, copy.end) == ("El ministro", "La ministra", 0, 11)
    assert (copy.kind, copy.original_gender, copy.injected_gender) == ("det-noun", "masc", "fem")
    assert_single_span(copy, doc)


def test_un_director_becomes_una_directora(treebanks):
    doc = spanish(
        treebanks,
        "Vimos a un director.",
        "1 Vimos VERB _ 0 root\n2 a ADP _ 4 case\n"
        f"3 un DET {IND_M} 4 det\n4 director NOUN {MS} 1 obj\n5 . PUNCT _ 1 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("Vimos a una directora.",)
    assert_single_span(copy, doc)


CASA_DEL_MINISTRO = (
    "La casa del ministro es grande.",
    f"1 La DET {DEF_F} 2 det\n2 casa NOUN {FS} 7 nsubj\n3-4 del\n3 de ADP _ 5 case\n4 el DET {DEF_M} 5 det\n"
    f"5 ministro NOUN {MS} 2 nmod\n6 es AUX _ 7 cop\n7 grande ADJ Number=Sing 0 root\n8 . PUNCT _ 7 punct",
)


def test_del_splits_into_de_la_when_the_noun_turns_feminine(treebanks):
    doc = spanish(treebanks, *CASA_DEL_MINISTRO)
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("La casa de la ministra es grande.",)
    assert (copy.original, copy.new_text) == ("del ministro", "de la ministra")
    assert_single_span(copy, doc)


def test_de_la_contracts_into_del_when_the_noun_turns_masculine(treebanks):
    doc = spanish(
        treebanks,
        "La casa de la ministra es grande.",
        f"1 La DET {DEF_F} 2 det\n2 casa NOUN {FS} 7 nsubj\n"
        f"3 de ADP _ 5 case\n4 la DET {DEF_F} 5 det\n5 ministra NOUN {FS} 2 nmod\n6 es AUX _ 7 cop\n"
        "7 grande ADJ Number=Sing 0 root\n8 . PUNCT _ 7 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("La casa del ministro es grande.",)
    assert (copy.original, copy.new_text) == ("de la ministra", "del ministro")
    assert_single_span(copy, doc)


def test_al_splits_into_a_la(treebanks):
    doc = spanish(
        treebanks,
        "Llamó al director.",
        "1 Llamó VERB _ 0 root\n2-3 al\n2 a ADP _ 4 case\n"
        f"3 el DET {DEF_M} 4 det\n4 director NOUN {MS} 1 obj\n5 . PUNCT _ 1 punct",
    )
    assert only(inject_document(doc, "es", ES)).target_texts == ("Llamó a la directora.",)


def test_common_gender_noun_flips_its_determiner_only(treebanks):
    doc = spanish(
        treebanks,
        "El periodista habló.",
        f"1 El DET {DEF_M} 2 det\n2 periodista NOUN {MS} 3 nsubj\n3 habló VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("La periodista habló.",)
    assert (copy.original, copy.new_text, copy.start, copy.end) == ("El", "La", 0, 2)
    assert_single_span(copy, doc)


def test_common_gender_noun_after_del_splits_the_contraction_only(treebanks):
    doc = spanish(
        treebanks,
        "Habló del periodista.",
        "1 Habló VERB _ 0 root\n2-3 del\n2 de ADP _ 4 case\n"
        f"3 el DET {DEF_M} 4 det\n4 periodista NOUN {MS} 1 obl\n5 . PUNCT _ 1 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("Habló de la periodista.",)
    assert (copy.original, copy.new_text) == ("del", "de la")


def test_ungendered_words_between_determiner_and_noun_stay_inside_the_span(treebanks):
    doc = spanish(
        treebanks,
        "El joven director habló.",
        f"1 El DET {DEF_M} 3 det\n2 joven ADJ Number=Sing 3 amod\n"
        f"3 director NOUN {MS} 4 nsubj\n4 habló VERB _ 0 root\n5 . PUNCT _ 4 punct",
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.target_texts == ("La joven directora habló.",)
    assert copy.new_text == "La joven directora"


def test_an_agreeing_adjective_in_the_noun_phrase_blocks_the_site(treebanks):
    doc = spanish(
        treebanks,
        "La ministra francesa habló.",
        f"1 La DET {DEF_F} 2 det\n2 ministra NOUN {FS} 4 nsubj\n"
        f"3 francesa ADJ {ADJ_F} 2 amod\n4 habló VERB _ 0 root\n5 . PUNCT _ 4 punct",
    )
    assert inject_document(doc, "es", ES) == []


def test_plural_nouns_are_no_sites(treebanks):
    doc = spanish(
        treebanks,
        "Los ministros hablaron.",
        f"1 Los DET {DEF_MP} 2 det\n2 ministros NOUN {MP} 3 nsubj\n"
        "3 hablaron VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert inject_document(doc, "es", ES) == []


def test_a_noun_the_rules_do_not_know_is_no_site(treebanks):
    doc = spanish(
        treebanks,
        "El perro ladró.",
        f"1 El DET {DEF_M} 2 det\n2 perro NOUN {MS} 3 nsubj\n3 ladró VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert inject_document(doc, "es", ES) == []


ELLA_LLEGO = ("Ella llegó.", f"1 Ella PRON {STRONG_F} 2 nsubj\n2 llegó VERB _ 0 root\n3 . PUNCT _ 2 punct")


def test_spanish_pronoun_flips_when_the_english_source_has_a_person_pronoun(treebanks):
    source = ("She arrived.", f"1 She PRON {SHE} 2 nsubj\n2 arrived VERB _ 0 root\n3 . PUNCT _ 2 punct")
    copy = only(inject_document(spanish(treebanks, *ELLA_LLEGO, source=source), "es", ES))
    assert (copy.target_texts, copy.kind) == (("Él llegó.",), "pronoun")


def test_spanish_pronoun_for_a_thing_is_no_site(treebanks):
    # "ella" standing for a feminine noun such as "la carta": the English source says "it"
    source = ("It arrived.", f"1 It PRON {IT} 2 nsubj\n2 arrived VERB _ 0 root\n3 . PUNCT _ 2 punct")
    assert inject_document(spanish(treebanks, *ELLA_LLEGO, source=source), "es", ES) == []


def test_spanish_pronoun_sites_need_an_english_source(treebanks):
    doc = make_doc(
        treebanks,
        "fr",
        "es",
        [
            (
                (
                    "Elle est arrivée.",
                    f"1 Elle PRON {STRONG_F} 3 nsubj\n"
                    f"2 est AUX _ 3 aux\n3 arrivée VERB {PART_F} 0 root\n4 . PUNCT _ 3 punct",
                ),
                ELLA_LLEGO,
            )
        ],
    )
    assert inject_document(doc, "es", ES) == []


# ------------------------------------------------------------------------------------------------------------
# French target


def french(treebanks, text: str, rows: str, source: tuple[str, str] = NEUTRAL["en"]) -> PudDocument:
    return make_doc(treebanks, "en", "fr", [(source, (text, rows))])


def test_le_roi_becomes_la_reine(treebanks):
    doc = french(
        treebanks,
        "Le roi parle.",
        f"1 Le DET {DEF_M} 2 det\n2 roi NOUN {MS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    copy = only(inject_document(doc, "fr", FR))
    assert (copy.target_texts, copy.new_text) == (("La reine parle.",), "La reine")
    assert_single_span(copy, doc)


def test_un_avocat_becomes_une_avocate(treebanks):
    doc = french(
        treebanks,
        "Un avocat parle.",
        f"1 Un DET {IND_M} 2 det\n2 avocat NOUN {MS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert only(inject_document(doc, "fr", FR)).target_texts == ("Une avocate parle.",)


def test_after_elided_l_only_the_noun_flips(treebanks):
    doc = french(
        treebanks,
        "L'avocat parle.",
        f"1 L' DET {DEF_M} 2 det\n2 avocat NOUN {MS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    copy = only(inject_document(doc, "fr", FR))
    assert copy.target_texts == ("L'avocate parle.",)
    assert (copy.original, copy.new_text, copy.start, copy.end) == ("avocat", "avocate", 2, 9)
    assert_single_span(copy, doc)


def test_common_gender_noun_after_elided_l_is_no_site(treebanks):
    doc = french(
        treebanks,
        "L'artiste parle.",
        f"1 L' DET {DEF_F} 2 det\n2 artiste NOUN {FS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert inject_document(doc, "fr", FR) == []


def test_du_splits_into_de_la(treebanks):
    doc = french(
        treebanks,
        "Le livre du roi.",
        f"1 Le DET {DEF_M} 2 det\n2 livre NOUN {MS} 0 root\n3-4 du\n"
        f"3 de ADP _ 5 case\n4 le DET {DEF_M} 5 det\n5 roi NOUN {MS} 2 nmod\n6 . PUNCT _ 2 punct",
    )
    assert only(inject_document(doc, "fr", FR)).target_texts == ("Le livre de la reine.",)


def test_a_flip_that_would_need_cet_is_skipped(treebanks):
    doc = french(
        treebanks,
        "Cette actrice parle.",
        f"1 Cette DET {DEM_F} 2 det\n2 actrice NOUN {FS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert inject_document(doc, "fr", FR) == []


HE_SPOKE = ("He spoke.", f"1 He PRON {HE} 2 nsubj\n2 spoke VERB _ 0 root\n3 . PUNCT _ 2 punct")


def test_subject_il_becomes_elle_when_the_english_source_has_he(treebanks):
    doc = french(
        treebanks,
        "Il a parlé.",
        f"1 Il PRON {STRONG_M} 3 nsubj\n2 a AUX _ 3 aux\n3 parlé VERB {PART_M} 0 root\n4 . PUNCT _ 3 punct",
        source=HE_SPOKE,
    )
    copy = only(inject_document(doc, "fr", FR))
    assert (copy.target_texts, copy.original_gender) == (("Elle a parlé.",), "masc")


def test_expletive_il_is_no_site(treebanks):
    doc = french(
        treebanks,
        "Il pleut.",
        f"1 Il PRON {STRONG_M} 2 expl:subj\n2 pleut VERB _ 0 root\n3 . PUNCT _ 2 punct",
        source=HE_SPOKE,
    )
    assert inject_document(doc, "fr", FR) == []


def test_elle_after_a_preposition_becomes_lui(treebanks):
    source = (
        "We spoke for her.",
        "1 We PRON Case=Nom|Number=Plur|Person=1|PronType=Prs 2 nsubj\n"
        f"2 spoke VERB _ 0 root\n3 for ADP _ 4 case\n4 her PRON {HER_ACC} 2 obl\n5 . PUNCT _ 2 punct",
    )
    doc = french(
        treebanks,
        "Nous parlons pour elle.",
        "1 Nous PRON Number=Plur|Person=1|PronType=Prs 2 nsubj\n"
        f"2 parlons VERB _ 0 root\n3 pour ADP _ 4 case\n4 elle PRON {STRONG_F} 2 obl\n5 . PUNCT _ 2 punct",
        source=source,
    )
    assert only(inject_document(doc, "fr", FR)).target_texts == ("Nous parlons pour lui.",)


def test_il_after_elided_si_is_skipped(treebanks):
    doc = french(
        treebanks,
        "S'il parle.",
        f"1 S' SCONJ _ 3 mark\n2 il PRON {STRONG_M} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
        source=HE_SPOKE,
    )
    assert inject_document(doc, "fr", FR) == []


# ------------------------------------------------------------------------------------------------------------
# Evidence

LA_MINISTRA = (
    "La ministra llegó.",
    f"1 La DET {DEF_F} 2 det\n2 ministra NOUN {FS} 3 nsubj\n3 llegó VERB _ 0 root\n4 . PUNCT _ 3 punct",
)
THE_MINISTER = (
    "The minister arrived.",
    "1 The DET Definite=Def|PronType=Art 2 det\n"
    "2 minister NOUN Number=Sing 3 nsubj\n3 arrived VERB _ 0 root\n4 . PUNCT _ 3 punct",
)


def test_a_gendered_pronoun_in_the_aligned_source_is_evidence(treebanks):
    source = ("She arrived.", f"1 She PRON {SHE} 2 nsubj\n2 arrived VERB _ 0 root\n3 . PUNCT _ 2 punct")
    copy = only(inject_document(spanish(treebanks, *LA_MINISTRA, source=source), "es", ES))
    assert copy.evidenced
    assert "'She'" in copy.evidence_note and "source s1" in copy.evidence_note


def test_nothing_but_the_flipped_words_is_no_evidence(treebanks):
    copy = only(inject_document(spanish(treebanks, *LA_MINISTRA, source=THE_MINISTER), "es", ES))
    assert not copy.evidenced
    assert copy.evidence_note == "no other fem person word in the document"


def test_a_person_of_the_other_gender_in_the_same_sentence_makes_evidence_ambiguous(treebanks):
    source = (
        "She met him.",
        f"1 She PRON {SHE} 2 nsubj\n2 met VERB _ 0 root\n3 him PRON {HIM} 2 obj\n4 . PUNCT _ 2 punct",
    )
    copy = only(inject_document(spanish(treebanks, *LA_MINISTRA, source=source), "es", ES))
    assert not copy.evidenced
    assert "beside a masc one" in copy.evidence_note


def test_evidence_elsewhere_in_the_document_counts(treebanks):
    she_won = ("She won.", f"1 She PRON {SHE} 2 nsubj\n2 won VERB _ 0 root\n3 . PUNCT _ 2 punct")
    ella_gano = ("Ella ganó.", f"1 Ella PRON {STRONG_F} 2 nsubj\n2 ganó VERB _ 0 root\n3 . PUNCT _ 2 punct")
    doc = make_doc(treebanks, "en", "es", [(she_won, ella_gano), (THE_MINISTER, LA_MINISTRA)])
    copies = inject_document(doc, "es", ES)
    noun = next(c for c in copies if c.kind == "det-noun")
    assert noun.sentence == 1 and noun.evidenced
    # the target pronoun of sentence 1 is searched before its English source
    assert noun.evidence_note == "target s1: 'Ella' (pronoun, fem)"


def test_a_predicate_adjective_of_the_person_noun_is_evidence(treebanks):
    doc = spanish(
        treebanks,
        "La ministra está cansada.",
        f"1 La DET {DEF_F} 2 det\n2 ministra NOUN {FS} 4 nsubj\n"
        f"3 está AUX _ 4 cop\n4 cansada ADJ {ADJ_F} 0 root\n5 . PUNCT _ 4 punct",
        source=THE_MINISTER,
    )
    copy = only(inject_document(doc, "es", ES))
    assert copy.evidenced
    assert copy.evidence_note == "target s1: 'cansada' (agreement, fem)"


def test_a_zero_subject_adjective_is_evidence_through_the_english_pronoun(treebanks):
    source = (
        "Estaba cansada.",
        f"1 Estaba AUX Number=Sing|Person=3 2 cop\n2 cansada ADJ {ADJ_F} 0 root\n3 . PUNCT _ 2 punct",
    )
    doc = english(
        treebanks,
        "She was tired.",
        f"1 She PRON {SHE} 3 nsubj\n2 was AUX _ 3 cop\n3 tired ADJ _ 0 root\n4 . PUNCT _ 3 punct",
        source=source,
    )
    copy = only(inject_document(doc, "en", EN, src_rules=ES))
    assert copy.evidenced and "'cansada'" in copy.evidence_note


def test_a_source_pronoun_without_an_english_person_pronoun_beside_it_is_no_evidence(treebanks):
    # "Elle" stands for a shop here: the aligned English says "it", so it anchors nothing
    shop = (
        (
            "Elle a fermé.",
            f"1 Elle PRON {STRONG_F} 3 nsubj\n2 a AUX _ 3 aux\n3 fermé VERB {PART_M} 0 root\n"
            "4 . PUNCT _ 3 punct",
        ),
        ("It closed.", f"1 It PRON {IT} 2 nsubj\n2 closed VERB _ 0 root\n3 . PUNCT _ 2 punct"),
    )
    smiled = (
        ("Merci.", "1 Merci INTJ _ 0 root\n2 . PUNCT _ 1 punct"),
        ("She smiled.", f"1 She PRON {SHE} 2 nsubj\n2 smiled VERB _ 0 root\n3 . PUNCT _ 2 punct"),
    )
    copy = only(inject_document(make_doc(treebanks, "fr", "en", [shop, smiled]), "en", EN))
    assert not copy.evidenced


def test_a_passive_participle_is_evidence_but_a_compound_tense_participle_is_not(treebanks):
    he_operated = (
        "He was operated on.",
        f"1 He PRON {HE} 3 nsubj:pass\n2 was AUX _ 3 aux:pass\n"
        "3 operated VERB _ 0 root\n4 on ADP _ 3 compound:prt\n5 . PUNCT _ 3 punct",
    )
    passive = ("Fue operado.", f"1 Fue AUX _ 2 aux:pass\n2 operado VERB {PART_M} 0 root\n3 . PUNCT _ 2 punct")
    compound = ("Ha operado.", f"1 Ha AUX _ 2 aux\n2 operado VERB {PART_M} 0 root\n3 . PUNCT _ 2 punct")
    # "ha operado": the participle after haber does not agree with the subject (common practice, no source)
    assert only(
        inject_document(english(treebanks, *he_operated, source=passive), "en", EN, src_rules=ES)
    ).evidenced
    assert not only(
        inject_document(english(treebanks, *he_operated, source=compound), "en", EN, src_rules=ES)
    ).evidenced


HE_STAYED = ("He stayed.", f"1 He PRON {HE} 2 nsubj\n2 stayed VERB _ 0 root\n3 . PUNCT _ 2 punct")


def test_a_gendered_person_noun_of_the_english_target_is_evidence(treebanks):
    the_father = (
        "The father left.",
        "1 The DET Definite=Def|PronType=Art 2 det\n"
        "2 father NOUN Number=Sing 3 nsubj\n3 left VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    doc = make_doc(treebanks, "es", "en", [(NEUTRAL["es"], the_father), (NEUTRAL["es"], HE_STAYED)])
    copy = only(inject_document(doc, "en", EN))
    assert copy.evidenced and copy.evidence_note == "target s1: 'father' (noun, masc)"


def test_a_person_noun_beside_a_pronoun_of_the_other_gender_is_ambiguous(treebanks):
    her_father = (
        "Her father left.",
        f"1 Her PRON {HER_POSS} 2 nmod:poss\n2 father NOUN Number=Sing 3 nsubj\n"
        "3 left VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    doc = make_doc(treebanks, "es", "en", [(NEUTRAL["es"], her_father), (NEUTRAL["es"], HE_STAYED)])
    he = next(c for c in inject_document(doc, "en", EN) if c.original == "He")
    assert not he.evidenced and "'father'" in he.evidence_note


# Even splits: the only evidence is one other target word (invented sentences; the pro-drop source of
# "Firmó." / "Pagó." shows no gender, a handbook fact of Spanish verb morphology, from memory).
SHE_SIGNED = ("She signed.", f"1 She PRON {SHE} 2 nsubj\n2 signed VERB _ 0 root\n3 . PUNCT _ 2 punct")
SHE_PAID = ("She paid.", f"1 She PRON {SHE} 2 nsubj\n2 paid VERB _ 0 root\n3 . PUNCT _ 2 punct")
FIRMO = ("Firmó.", "1 Firmó VERB Number=Sing|Person=3 0 root\n2 . PUNCT _ 1 punct")
PAGO = ("Pagó.", "1 Pagó VERB Number=Sing|Person=3 0 root\n2 . PUNCT _ 1 punct")


def test_one_other_target_word_and_a_silent_source_is_an_even_split(treebanks):
    doc = make_doc(treebanks, "es", "en", [(FIRMO, SHE_SIGNED), (PAGO, SHE_PAID)])
    copies = inject_document(doc, "en", EN)
    assert [c.new_text for c in copies] == ["He", "He"]
    assert all(c.evidenced and c.even_split for c in copies)


def test_a_gendered_source_word_breaks_the_split(treebanks):
    ella_firmo = ("Ella firmó.", f"1 Ella PRON {STRONG_F} 2 nsubj\n2 firmó VERB _ 0 root\n3 . PUNCT _ 2 punct")
    doc = make_doc(treebanks, "es", "en", [(ella_firmo, SHE_SIGNED), (PAGO, SHE_PAID)])
    assert [(c.evidenced, c.even_split) for c in inject_document(doc, "en", EN)] == [(True, False)] * 2


def test_two_other_target_words_are_a_majority_not_a_split(treebanks):
    she_left = ("She left.", f"1 She PRON {SHE} 2 nsubj\n2 left VERB _ 0 root\n3 . PUNCT _ 2 punct")
    doc = make_doc(treebanks, "es", "en", [(FIRMO, SHE_SIGNED), (PAGO, SHE_PAID), (NEUTRAL["es"], she_left)])
    copies = inject_document(doc, "en", EN)
    assert len(copies) == 3 and not any(c.even_split for c in copies)


def test_an_unevidenced_copy_is_no_split(treebanks):
    copy = only(inject_document(make_doc(treebanks, "es", "en", [(FIRMO, SHE_SIGNED)]), "en", EN))
    assert not copy.evidenced and not copy.even_split


# ------------------------------------------------------------------------------------------------------------
# Reproducibility and the corpus helpers


def four_sites(treebanks) -> PudDocument:
    rows = (
        f"1 He PRON {HE} 2 nsubj\n2 told VERB _ 0 root\n3 her PRON {HER_ACC} 2 iobj\n"
        f"4 about ADP _ 6 case\n5 his PRON {HIS} 6 nmod:poss\n6 dog NOUN Number=Sing 2 obl\n"
        f"7 himself PRON {HIMSELF} 1 appos\n8 . PUNCT _ 2 punct"
    )
    return english(treebanks, "He told her about his dog himself.", rows)


def test_every_site_gives_one_copy_by_default(treebanks):
    copies = inject_document(four_sites(treebanks), "en", EN)
    assert [c.new_text for c in copies] == ["She", "him", "her", "herself"]
    assert len({c.copy_id for c in copies}) == 4


def test_the_same_seed_gives_the_same_copies(treebanks):
    doc = four_sites(treebanks)
    first = inject_document(doc, "en", EN, seed=11, max_per_doc=2)
    assert first == inject_document(doc, "en", EN, seed=11, max_per_doc=2)
    assert len(first) == 2
    full = {c.copy_id: c for c in inject_document(doc, "en", EN)}
    assert all(full[c.copy_id] == c for c in first)  # a sampled copy keeps its id and content


def test_different_seeds_choose_different_samples(treebanks):
    doc = four_sites(treebanks)
    picks = {
        tuple(c.copy_id for c in inject_document(doc, "en", EN, seed=s, max_per_doc=2)) for s in range(20)
    }
    assert len(picks) > 1


def test_inject_corpus_concatenates_documents_in_order(treebanks):
    doc = four_sites(treebanks)
    other = PudDocument("d2", doc.pairs, doc.src_lang, doc.tgt_lang)
    copies = inject_corpus([doc, other], "en", EN, seed=3, max_per_doc=3)
    assert copies == inject_document(doc, "en", EN, seed=3, max_per_doc=3) + inject_document(
        other, "en", EN, seed=3, max_per_doc=3
    )


def test_copy_document_builds_an_input_document_with_the_new_target(treebanks):
    doc = four_sites(treebanks)
    copy = inject_document(doc, "en", EN)[1]
    built = copy_document(doc, copy)
    assert built.doc_id == copy.copy_id
    assert [(s.seg_id, s.source, s.target) for s in built.segments] == [
        ("s1", "Llovió.", "He told him about his dog himself.")
    ]


# ------------------------------------------------------------------------------------------------------------
# Against the project's real rules and the real treebank


def test_real_spanish_and_french_rules_drive_the_same_flips(treebanks):
    rules_module = pytest.importorskip("gendertrace.rules")
    es, fr = rules_module.load_rules("es"), rules_module.load_rules("fr")
    assert es.noun_counterpart("ministro") == ("masc", "ministra")
    doc = spanish(treebanks, *CASA_DEL_MINISTRO)
    assert only(inject_document(doc, "es", es)).target_texts == ("La casa de la ministra es grande.",)
    doc = french(
        treebanks,
        "Un avocat parle.",
        f"1 Un DET {IND_M} 2 det\n2 avocat NOUN {MS} 3 nsubj\n3 parle VERB _ 0 root\n4 . PUNCT _ 3 punct",
    )
    assert only(inject_document(doc, "fr", fr)).target_texts == ("Une avocate parle.",)


TREEBANK = Path(__file__).resolve().parents[2] / ".." / "shared" / "ud-pud"


@pytest.mark.parametrize("src, tgt", [("es", "en"), ("en", "es"), ("en", "fr")])
def test_real_treebank_copies_differ_in_exactly_one_span(src, tgt):
    if not TREEBANK.is_dir():
        pytest.skip(f"parallel UD treebanks not found at ../shared/ud-pud (looked in {TREEBANK.resolve()})")
    rules_module = pytest.importorskip("gendertrace.rules")
    docs = load_pud_pair(TREEBANK, src, tgt)
    by_id = {d.doc_id: d for d in docs}
    copies = inject_corpus(docs, tgt, rules_module.load_rules(tgt))
    assert copies, "the news treebank has gendered words in every target language"
    assert len({c.copy_id for c in copies}) == len(copies)
    for copy in copies:
        assert_single_span(copy, by_id[copy.doc_id])
        assert {copy.original_gender, copy.injected_gender} == {"masc", "fem"}
