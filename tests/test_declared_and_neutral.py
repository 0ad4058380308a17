"""Declared pronouns (the entity sheet), neutral forms in the rules, and the policies that decide about them.

Sentences, people and places are invented for these tests. Pronoun paradigms and the status of forms are
named beside each test with their source ("from memory" where recalled).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

import pytest
import yaml
from click.testing import CliRunner

from gendertrace import Scorer, ScoreSettings
from gendertrace.cli import main
from gendertrace.declared import Policy, load_entity_sheet, load_policy
from gendertrace.errors import InputError, RulesError
from gendertrace.mentions.extract import extract_mentions, neutral_forms
from gendertrace.model import Document, DocumentResult, Segment
from gendertrace.parse.base import get_parser
from gendertrace.rules import load_rules
from gendertrace.rules.loader import parse_rules, rules_dir

Pairs = Sequence[tuple[str, str]]

ROBIN_THEY = """
persons:
  - name: Robin Okafor
    aliases: [Okafor]
    pronouns: {en: they/them, es: elle, fr: iel}
"""
SAM_SHE = """
persons:
  - name: Sam Varga
    aliases: [Varga]
    pronouns: {en: she/her, es: ella}
"""


# --------------------------------------------------------------------------------------------------
# Helpers: one parser per language for the module; a Scorer per call (cheap once the parsers exist)

_PARSERS: dict = {}


def _parser(lang: str):
    if lang not in _PARSERS:
        _PARSERS[lang] = get_parser(lang)
    return _PARSERS[lang]


def _sheet(tmp_path: Path, text: str, name: str = "people.yaml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return load_entity_sheet(path)


def _score(src: str, tgt: str, pairs: Pairs, sheet=None, policy: Policy | None = None) -> DocumentResult:
    settings = ScoreSettings(entity_sheet=sheet, policy=policy or Policy())
    scorer = Scorer(src, tgt, settings, _parser(src), _parser(tgt))
    doc = Document("d1", tuple(Segment(str(k), s, t) for k, (s, t) in enumerate(pairs, 1)))
    return next(iter(scorer.score([doc])))


def _mentions(lang: str, text: str):
    parsed = _parser(lang).parse_many([text])[0]
    return parsed, extract_mentions(parsed, 0, "1", "target", load_rules(lang))


def _neutral_marks(lang: str, text: str) -> list[str]:
    _, ms = _mentions(lang, text)
    return [mk.text for m in ms for mk in m.marks if mk.gender == "neutral"]


def _neutral_forms(lang: str, text: str) -> list[tuple[str, str]]:
    parsed = _parser(lang).parse_many([text])[0]
    return [(t, rule) for _, _, t, rule in neutral_forms(parsed, load_rules(lang))]


def _found(result: DocumentResult) -> list[tuple[str, str, str | None, str | None]]:
    return [(f.kind, f.text, f.expected, f.found) for f in result.findings]


# --------------------------------------------------------------------------------------------------
# Neutral forms of the rules (no spaCy needed)


def test_rules_give_the_neopronoun_paradigms_neutral_gender():
    # xe/xem/xyr, ze/zir, ey/em/eir: paradigms as listed in common pronoun guides (from memory).
    en = load_rules("en")
    for form in (
        "xe",
        "xem",
        "xyr",
        "xemself",
        "ze",
        "zir",
        "zirself",
        "ey",
        "em",
        "eir",
        "emself",
        "themself",
    ):
        assert {f.gender for f in en.pronoun(form)} == {"neutral"}, form


def test_rules_mark_they_as_plural_with_a_singular_use():
    # Singular they for one known person (from memory: Chicago Manual of Style 17th ed., APA 7th ed.).
    forms = load_rules("en").pronoun("they")
    assert [(f.number, f.singular_neutral, f.gender) for f in forms] == [("plur", True, None)]


def test_rules_know_the_neutral_honorific_mx():
    # Mx: listed by major English dictionaries as the honorific without binary gender (from memory).
    assert load_rules("en").honorific("Mx.") == "neutral"


def test_rules_spanish_and_french_neutral_pronouns():
    # elle (es) and iel/iels (fr), contested (from memory: rejected by the RAE; iel in the Robert, 2021).
    assert [(f.gender, f.number) for f in load_rules("es").pronoun("elle")] == [("neutral", "sing")]
    assert [(f.gender, f.number) for f in load_rules("fr").pronoun("iel")] == [("neutral", "sing")]
    assert [(f.gender, f.number) for f in load_rules("fr").pronoun("iels")] == [("neutral", "plur")]
    # French "elle" stays the feminine pronoun.
    assert [f.gender for f in load_rules("fr").pronoun("elle")] == ["fem"]


def _en_rules_data() -> dict:
    return yaml.safe_load((rules_dir() / "en.yaml").read_text(encoding="utf-8"))


def test_loader_rejects_singular_neutral_on_a_singular_form(tmp_path):
    data = _en_rules_data()
    data["pronouns"].append(
        {"form": "xe", "gender": "neutral", "number": "sing", "type": "personal", "singular_neutral": True}
    )
    with pytest.raises(RulesError, match=r"pronouns\[\d+\]\.singular_neutral"):
        parse_rules(data, tmp_path / "en.yaml")


def test_loader_rejects_a_neutral_word_without_number(tmp_path):
    data = _en_rules_data()
    data["neutral_language"] = {"words": [{"form": "todes"}]}
    with pytest.raises(RulesError, match=r"neutral_language\.words\[0\].*number"):
        parse_rules(data, tmp_path / "en.yaml")


def test_loader_rejects_a_letter_as_midpoint(tmp_path):
    data = _en_rules_data()
    data["neutral_language"] = {"midpoints": ["e"]}
    with pytest.raises(RulesError, match=r"neutral_language\.midpoints\[0\]"):
        parse_rules(data, tmp_path / "en.yaml")


# --------------------------------------------------------------------------------------------------
# Entity sheets: formats and errors (no spaCy needed)


def test_yaml_json_and_csv_sheets_read_alike(tmp_path):
    y = _sheet(tmp_path, ROBIN_THEY)
    j = _sheet(
        tmp_path,
        '{"persons": [{"name": "Robin Okafor", "aliases": ["Okafor"], '
        '"pronouns": {"en": "they/them", "es": "elle", "fr": "iel"}}]}',
        "people.json",
    )
    c = _sheet(
        tmp_path,
        "name,aliases,pronouns_en,pronouns_es,pronouns_fr\nRobin Okafor,Okafor,they/them,elle,iel\n",
        "people.csv",
    )
    assert y.persons == j.persons == c.persons
    assert y.persons[0].pronouns_for("en") == ("they", "them")
    assert y.person_for("OKAFOR").name == "Robin Okafor"


def test_sheet_alternatives_keep_their_order(tmp_path):
    sheet = _sheet(tmp_path, "persons:\n  - name: Noa Lestre\n    pronouns: {es: elle or ella}\n")
    assert sheet.persons[0].pronouns_for("es") == ("elle", "ella")


def test_bad_gender_names_key_and_value(tmp_path):
    with pytest.raises(
        InputError, match=r"persons\[0\]\.gender: expected fem, masc or neutral, found 'nonbinary'"
    ):
        _sheet(tmp_path, "persons:\n  - name: Noa Lestre\n    gender: nonbinary\n")


def test_bad_csv_row_names_its_line(tmp_path):
    with pytest.raises(
        InputError, match=r"people\.csv:3: row: 'Ilan Bero' declares neither pronouns nor a gender"
    ):
        _sheet(tmp_path, "name,pronouns_en\nNoa Lestre,they/them\nIlan Bero,\n", "people.csv")


def test_broken_yaml_names_its_line(tmp_path):
    with pytest.raises(InputError, match=r"people\.yaml:3: not valid YAML"):
        _sheet(tmp_path, "persons:\n  - name: Noa\n  pronouns: [en\n")


def test_sheet_without_persons_list_is_refused(tmp_path):
    with pytest.raises(InputError, match="a list under 'persons'"):
        _sheet(tmp_path, "people: []\n")


def test_one_alias_for_two_persons_is_refused(tmp_path):
    text = (
        "persons:\n  - {name: Noa Lestre, aliases: [Lestre], gender: fem}\n"
        "  - {name: Ilan Lestre, aliases: [Lestre], gender: masc}\n"
    )
    with pytest.raises(InputError, match="'lestre' is already listed for 'Noa Lestre'"):
        _sheet(tmp_path, text)


def test_unknown_sheet_format_is_refused(tmp_path):
    with pytest.raises(InputError, match="unknown entity sheet format '.txt'"):
        _sheet(tmp_path, "Noa", "people.txt")


def test_cli_reports_a_bad_sheet_in_one_line(tmp_path):
    (tmp_path / "in.tsv").write_text(
        "doc_id\tseg_id\tsource\ttarget\nd\t1\tHola.\tHello.\n", encoding="utf-8"
    )
    (tmp_path / "bad.yaml").write_text("persons:\n  - name: Noa\n    gender: x\n", encoding="utf-8")
    res = CliRunner().invoke(
        main,
        [
            "score",
            str(tmp_path / "in.tsv"),
            "-s",
            "es",
            "-t",
            "en",
            "-o",
            str(tmp_path / "out.jsonl"),
            "--entities",
            str(tmp_path / "bad.yaml"),
        ],
    )
    assert res.exit_code == 1
    assert "persons[0].gender: expected fem, masc or neutral, found 'x'" in res.output
    assert "Traceback" not in res.output


def test_policy_file_and_its_errors(tmp_path):
    good = tmp_path / "policy.yaml"
    good.write_text("neutral_for_binary: flag\nassumptions: [named]\ngendered_for_nonbinary: false\n")
    assert load_policy(good) == Policy("flag", False, ("named",), None)
    bad = tmp_path / "bad.yaml"
    bad.write_text("neutral_for_binary: sometimes\n")
    with pytest.raises(InputError, match="expected accept or flag, not 'sometimes'"):
        load_policy(bad)
    bad.write_text("neutral: flag\n")
    with pytest.raises(InputError, match="neutral: unknown policy key"):
        load_policy(bad)


# --------------------------------------------------------------------------------------------------
# Neutral forms on real parses


@pytest.mark.slow
@pytest.mark.parametrize(
    "text, expected",
    [
        ("Kai Morrow opened the clinic. Xe greeted the first patient and thanked xem.", ["Xe", "xem"]),
        ("Sam Varga retired. Ze said zir years in Ostrel were happy.", ["Ze", "zir"]),
        ("Noor Bellamy paints. Ey sold eir first canvas last week.", ["Ey", "eir"]),
    ],
)
def test_english_neopronouns_are_neutral_marks_not_names(text, expected):
    _, ms = _mentions("en", text)
    assert _neutral_marks("en", text) == expected
    assert not [m for m in ms if m.kind == "name" and m.text in expected]


@pytest.mark.slow
def test_spanish_elle_is_a_neutral_pronoun():
    assert _neutral_marks("es", "Alex Ferrán llegó tarde. Elle dijo que estaba bien.") == ["Elle"]


@pytest.mark.slow
def test_spanish_e_form_noun_is_a_neutral_person_noun():
    _, ms = _mentions("es", "El niñe jugaba en el patio de Ruveda.")
    assert [(m.text, m.kind, m.gender) for m in ms] == [("niñe", "noun", "neutral")]


@pytest.mark.slow
def test_spanish_todes_is_recognised_and_is_no_person_mention():
    assert _neutral_forms("es", "Bienvenides todes a Salvetra.") == [("todes", "neutral form")]
    assert _mentions("es", "Bienvenides todes a Salvetra.")[1] == []


@pytest.mark.slow
@pytest.mark.parametrize(
    "text, doubled",
    [
        ("Los y las vecinas de Ruveda votaron.", "Los y las"),
        ("Los ciudadanos y ciudadanas de Lisquen votaron.", "ciudadanos y ciudadanas"),
    ],
)
def test_spanish_doubled_forms_are_recognised(text, doubled):
    # Doubled forms name both genders (from memory: Spanish public-administration style guides).
    assert (doubled, "doubled form") in _neutral_forms("es", text)


@pytest.mark.slow
def test_two_names_joined_by_y_are_no_doubled_form():
    assert _neutral_forms("es", "Ana y Luis llegaron a Ruveda.") == []


@pytest.mark.slow
def test_spanish_word_ending_in_e_is_not_taken_for_a_neutral_form():
    assert _neutral_forms("es", "La estudiante de Ruveda llegó tarde.") == []


@pytest.mark.slow
def test_french_iel_is_a_neutral_pronoun():
    assert _neutral_marks("fr", "Alex Ferrand est arrivé hier. Iel a souri.") == ["Iel"]


@pytest.mark.slow
def test_french_iels_and_celleux_are_recognised_plural_forms():
    assert ("Iels", "neutral pronoun") in _neutral_forms("fr", "Iels sont parti·e·s.")
    assert _neutral_forms("fr", "Celleux qui viennent de Tavernet.") == [("Celleux", "neutral form")]
    assert _mentions("fr", "Iels sont arrivés.")[1] == []  # plural: about a group, no person mention


@pytest.mark.slow
def test_french_mid_dot_forms_are_recognised():
    # Écriture inclusive with the mid dot (from memory: contested, discouraged for official texts since 2017).
    assert _neutral_forms("fr", "Les étudiant·e·s de Colmarén manifestent.") == [
        ("étudiant·e·s", "neutral form")
    ]
    _, ms = _mentions("fr", "L'étudiant·e est venu·e hier.")
    assert [(m.text, m.gender) for m in ms] == [("étudiant·e", "neutral")]


@pytest.mark.slow
def test_french_doubled_form_is_recognised():
    assert ("étudiants et étudiantes", "doubled form") in _neutral_forms(
        "fr", "Les étudiants et étudiantes de Lisquen."
    )


# --------------------------------------------------------------------------------------------------
# Singular and plural they


ROBIN_ES = (
    "Robin Okafor es la directora del archivo de Velmora.",
    "Robin Okafor is the director of the Velmora archive.",
)


@pytest.mark.slow
def test_they_with_a_named_antecedent_is_singular_and_neutral():
    r = _score(
        "es",
        "en",
        [ROBIN_ES, ("Ella presentó el informe anual ayer.", "They presented their annual report yesterday.")],
    )
    robin = next(e for e in r.entities if e.label == "Robin Okafor")
    assert [
        (m.text, mk.gender, mk.rule) for m in robin.target_mentions for mk in m.marks if m.kind == "pronoun"
    ] == [("They", "neutral", "singular they"), ("their", "neutral", "singular they")]


@pytest.mark.slow
def test_they_after_a_plural_subject_stays_plural():
    r = _score(
        "es",
        "en",
        [
            (
                "Los técnicos llegaron a Velmora con Dana Quiroga.",
                "The technicians arrived in Velmora with Dana Quiroga.",
            ),
            ("Ellos revisaron el puerto.", "They checked the port."),
        ],
    )
    assert not [m for c in r.chains if c.side == "target" for m in c.mentions if m.text == "They"]


@pytest.mark.slow
def test_they_after_coordinated_persons_stays_plural():
    r = _score(
        "es",
        "en",
        [
            (
                "Dana Quiroga y Teo Brasa llegaron a Velmora.",
                "Dana Quiroga and Teo Brasa arrived in Velmora.",
            ),
            ("Ellos revisaron el puerto.", "They checked the port."),
        ],
    )
    assert not [m for c in r.chains if c.side == "target" for m in c.mentions if m.text == "They"]


# --------------------------------------------------------------------------------------------------
# Declarations


@pytest.mark.slow
def test_declaration_overrides_contrary_source_evidence(tmp_path):
    r = _score(
        "es",
        "en",
        [ROBIN_ES, ("Ella presentó el informe anual ayer.", "She presented the annual report yesterday.")],
        sheet=_sheet(tmp_path, ROBIN_THEY),
    )
    assert _found(r) == [("contradiction", "She", "neutral", "fem")]
    assert [(e.kind, e.weight) for e in r.findings[0].evidence] == [("declared", 3.0)]
    robin = next(e for e in r.entities if e.label == "Robin Okafor")
    assert (robin.gender, robin.declared) == ("neutral", ("neutral",))


@pytest.mark.slow
def test_declared_they_accepts_singular_they(tmp_path):
    r = _score(
        "es",
        "en",
        [ROBIN_ES, ("Ella presentó el informe anual ayer.", "They presented their annual report yesterday.")],
        sheet=_sheet(tmp_path, ROBIN_THEY),
    )
    assert r.findings == ()
    assert (r.stats.checked, r.stats.consistent) == (2, 2)


@pytest.mark.slow
def test_without_a_sheet_the_same_target_is_judged_by_the_source():
    r = _score(
        "es",
        "en",
        [ROBIN_ES, ("Ella presentó el informe anual ayer.", "She presented the annual report yesterday.")],
    )
    assert r.findings == ()


@pytest.mark.slow
def test_declared_she_outranks_masculine_source(tmp_path):
    pairs = [
        ("El director Sam Varga llegó ayer a Ostrel.", "Director Sam Varga arrived in Ostrel yesterday."),
        ("Él visitó después el puerto.", "He then visited the port."),
    ]
    assert _found(_score("es", "en", pairs)) == []
    assert _found(_score("es", "en", pairs, sheet=_sheet(tmp_path, SAM_SHE))) == [
        ("contradiction", "He", "fem", "masc")
    ]


@pytest.mark.slow
def test_declaration_decides_where_the_source_is_silent(tmp_path):
    pairs = [
        ("Varga llegó ayer a Ostrel.", "Varga arrived in Ostrel yesterday."),
        ("Después visitó el puerto.", "Then he visited the port."),
    ]
    assert [f.kind for f in _score("es", "en", pairs).findings] == ["assumption"]
    assert _found(_score("es", "en", pairs, sheet=_sheet(tmp_path, SAM_SHE))) == [
        ("contradiction", "he", "fem", "masc")
    ]


@pytest.mark.slow
def test_spanish_target_ella_contradicts_declared_elle(tmp_path):
    sheet = _sheet(tmp_path, ROBIN_THEY)
    src = ("Robin Okafor leads the Velmora archive.", "They started on Monday.")
    wrong = _score(
        "en",
        "es",
        [(src[0], "Robin Okafor dirige el archivo de Velmora."), (src[1], "Ella empezó el lunes.")],
        sheet=sheet,
    )
    right = _score(
        "en",
        "es",
        [(src[0], "Robin Okafor dirige el archivo de Velmora."), (src[1], "Elle empezó el lunes.")],
        sheet=sheet,
    )
    assert _found(wrong) == [("contradiction", "Ella", "neutral", "fem")]
    assert right.findings == ()


# --------------------------------------------------------------------------------------------------
# Policies


@pytest.mark.slow
def test_neutral_form_for_binary_evidence_follows_the_policy():
    pairs = [
        ROBIN_ES,
        ("Ella presentó el informe anual ayer.", "They presented their annual report yesterday."),
    ]
    assert _score("es", "en", pairs).findings == ()
    flagged = _score("es", "en", pairs, policy=Policy(neutral_for_binary="flag"))
    assert _found(flagged) == [
        ("contradiction", "They", "fem", "neutral"),
        ("contradiction", "their", "fem", "neutral"),
    ]


@pytest.mark.slow
def test_gendered_forms_for_declared_nonbinary_can_be_accepted(tmp_path):
    pairs = [ROBIN_ES, ("Ella presentó el informe anual ayer.", "She presented the annual report yesterday.")]
    r = _score(
        "es", "en", pairs, sheet=_sheet(tmp_path, ROBIN_THEY), policy=Policy(gendered_for_nonbinary=False)
    )
    assert r.findings == ()


@pytest.mark.slow
@pytest.mark.parametrize(
    "kinds, shown", [(("named", "roles", "other"), 1), (("named",), 1), (("roles",), 0), ((), 0)]
)
def test_assumptions_are_shown_for_the_chosen_entity_kinds(kinds, shown):
    pairs = [
        ("Sam Varga llegó ayer a Ostrel.", "Sam Varga arrived in Ostrel yesterday."),
        ("Después visitó el puerto.", "Then he visited the port."),
    ]
    r = _score("es", "en", pairs, policy=Policy(assumptions=kinds))
    assert sum(1 for f in r.findings if f.kind == "assumption") == shown


@pytest.mark.slow
def test_first_names_are_off_by_default_and_weak_when_on(tmp_path):
    names = tmp_path / "names.tsv"
    names.write_text("# invented list for the test\nsam\tfem\n", encoding="utf-8")
    pairs = [
        ("El director Sam Varga llegó ayer a Ostrel.", "Director Sam Varga arrived in Ostrel yesterday."),
        ("Después visitó el puerto.", "Then he visited the port."),
    ]
    off = _score("es", "en", pairs)
    on = _score("es", "en", pairs, policy=Policy(first_names=str(names)))
    sam_off = next(e for e in off.entities if "Varga" in e.label)
    sam_on = next(e for e in on.entities if "Varga" in e.label)
    assert not [x for x in sam_off.evidence if x.kind == "first-name"]
    assert [(x.kind, x.text, x.gender, x.weight) for x in sam_on.evidence if x.kind == "first-name"] == [
        ("first-name", "Sam", "fem", 0.2)
    ]
    assert sam_on.gender == "masc"  # "El director" outranks the name list
    assert _found(on) == _found(off)


def test_package_first_name_list_reads_the_package_data():
    # gender-guesser ships its name dictionary inside the package: "Maria" is listed female and "John" male
    # (from memory); an unlisted string gives nothing.
    pytest.importorskip("gender_guesser")
    from gendertrace.declared.policy import load_first_names

    names = load_first_names("package")
    assert names["maria"] == "fem" and names["john"] == "masc"
    assert "qzxw" not in names


@pytest.mark.slow
def test_package_first_names_are_weak_evidence_that_text_outranks():
    pytest.importorskip("gender_guesser")
    pairs = [
        ("El director Maria Varga llegó ayer a Ostrel.", "Director Maria Varga arrived in Ostrel yesterday."),
        ("Después visitó el puerto.", "Then he visited the port."),
    ]
    on = _score("es", "en", pairs, policy=Policy(first_names="package"))
    ent = next(e for e in on.entities if "Varga" in e.label)
    assert [(x.kind, x.gender) for x in ent.evidence if x.kind == "first-name"] == [("first-name", "fem")]
    assert ent.gender == "masc"  # the determiner and noun of "El director" outrank the name


# --------------------------------------------------------------------------------------------------
# Signature and explanation


def test_signature_records_policy_and_sheet_digest(tmp_path):
    from gendertrace.parse.conllu_backend import ConlluParser

    conllu = tmp_path / "x.conllu"
    conllu.write_text("# text = Hola.\n1\tHola\thola\tINTJ\t_\t_\t0\troot\t_\t_\n\n", encoding="utf-8")
    sheet = _sheet(tmp_path, ROBIN_THEY)
    base = ScoreSettings(entity_sheet=sheet, policy=Policy(neutral_for_binary="flag"))
    sig = Scorer(
        "es", "en", base, ConlluParser("es", [str(conllu)]), ConlluParser("en", [str(conllu)])
    ).signature()
    assert sig["entity_sheet"] == sheet.digest and len(sheet.digest) == 12
    assert sig["policy"]["neutral_for_binary"] == "flag"
    other = _sheet(tmp_path, SAM_SHE, "other.yaml")
    sig2 = Scorer(
        "es",
        "en",
        replace(base, entity_sheet=other),
        ConlluParser("es", [str(conllu)]),
        ConlluParser("en", [str(conllu)]),
    ).signature()
    assert sig2["entity_sheet"] != sig["entity_sheet"]


@pytest.mark.slow
def test_explain_shows_declarations_and_policy(tmp_path):
    from gendertrace.api import explain_document

    scorer = Scorer(
        "es", "en", ScoreSettings(entity_sheet=_sheet(tmp_path, ROBIN_THEY)), _parser("es"), _parser("en")
    )
    doc = Document(
        "d1",
        (Segment("1", *ROBIN_ES), Segment("2", "Ella presentó el informe.", "She presented the report.")),
    )
    text = explain_document(scorer, doc)
    assert "Robin Okafor: en: they or them; es: elle; fr: iel" in text
    assert "neutral target form for binary evidence: accept" in text
    assert "declared: neutral" in text
    assert "declared (entity sheet" in text and " declared (entity sheet: Robin Okafor" in text


@pytest.mark.slow
def test_explain_lists_the_neutral_forms_of_the_target():
    from gendertrace.api import explain_document

    scorer = Scorer("en", "es", ScoreSettings(), _parser("en"), _parser("es"))
    doc = Document("d1", (Segment("1", "Robin Okafor leads the archive.", "Robin Okafor dirige el archivo."),
                          Segment("2", "They started on Monday.", "Elle empezó el lunes.")))
    assert "  [2] 'Elle' (neutral pronoun)" in explain_document(scorer, doc)


@pytest.mark.slow
def test_score_command_applies_sheet_and_records_it_in_the_signature(tmp_path):
    import json

    inp = tmp_path / "in.tsv"
    inp.write_text("doc_id\tseg_id\tsource\ttarget\n"
                   f"d1\t1\t{ROBIN_ES[0]}\t{ROBIN_ES[1]}\n"
                   "d1\t2\tElla presentó el informe anual ayer.\t"
                   "She presented the annual report yesterday.\n",
                   encoding="utf-8")
    (tmp_path / "people.yaml").write_text(ROBIN_THEY, encoding="utf-8")
    out = tmp_path / "out.jsonl"
    res = CliRunner().invoke(main, ["score", str(inp), "-s", "es", "-t", "en", "-o", str(out), "--no-cache",
                                    "--entities", str(tmp_path / "people.yaml"),
                                    "--neutral-for-binary", "flag", "-q"])
    assert res.exit_code == 0, res.output
    doc = json.loads(out.read_text(encoding="utf-8"))
    assert [(f["text"], f["expected"], f["evidence"][0]["kind"]) for f in doc["findings"]] == [
        ("She", "neutral", "declared")]
    signature = json.loads((tmp_path / "out.jsonl.signature.json").read_text(encoding="utf-8"))
    assert signature["policy"]["neutral_for_binary"] == "flag"
    assert signature["entity_sheet"] == load_entity_sheet(tmp_path / "people.yaml").digest


@pytest.mark.slow
def test_gendered_target_for_a_source_singular_they_is_an_assumption():
    r = _score("en", "es", [("Robin Okafor leads the Velmora archive.", "Robin Okafor dirige el archivo de Velmora."),
                            ("They started on Monday.", "Ella empezó el lunes.")])
    robin = next(e for e in r.entities if e.label == "Robin Okafor")
    assert [x.rule for x in robin.evidence if x.side == "source"] == ["singular they"]
    assert _found(r) == [("assumption", "Ella", None, "fem")]


@pytest.mark.parametrize("word", ["Lehrer*innen", "Lehrer:innen", "Lehrer_innen"])
def test_german_gender_star_colon_and_gap_forms_are_neutral_plurals(tmp_path, word):
    # German inclusive spellings (gender star, colon, gender gap) with the plural suffix -innen; common usage,
    # not official orthography (from memory). German comes in through CoNLL-U.
    from gendertrace.mentions.extract import neutral_forms
    from gendertrace.parse.conllu_backend import read_conllu
    from gendertrace.rules import load_rules

    path = tmp_path / "de.conllu"
    path.write_text(
        f"# text = Die {word} kommen.\n"
        "1\tDie\tder\tDET\t_\tNumber=Plur\t2\tdet\t_\t_\n"
        f"2\t{word}\tLehrer\tNOUN\t_\tNumber=Plur\t3\tnsubj\t_\t_\n"
        "3\tkommen\tkommen\tVERB\t_\tNumber=Plur|Person=3\t0\troot\t_\tSpaceAfter=No\n"
        "4\t.\t.\tPUNCT\t_\t_\t3\tpunct\t_\t_\n\n",
        encoding="utf-8",
    )
    parsed = read_conllu(path, "de")[0].parsed
    forms = neutral_forms(parsed, load_rules("de"))
    assert [f[2] for f in forms] == [word]
