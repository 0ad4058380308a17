"""Declared facts and first names as evidence items on the entities of one document."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from gendertrace.declared.policy import load_first_names
from gendertrace.declared.sheet import DeclaredPerson, EntitySheet
from gendertrace.errors import RulesError
from gendertrace.evidence.resolve import dedupe, resolve_gender
from gendertrace.mentions.extract import name_key
from gendertrace.model import Entity, EvidenceItem, Mention
from gendertrace.rules import load_rules
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import EvidenceKind, MentionKind, Rule

# A declaration decides; a first name is weak evidence: rules/scoring/weights.yaml, section "evidence".
W_DECLARED = WEIGHTS.evidence.declared
W_FIRST_NAME = WEIGHTS.evidence.first_name


def _form_gender(form: str, lang: str) -> str | None:
    try:
        rules = load_rules(lang)
    except RulesError:
        return None
    forms = rules.pronoun(form)
    if any(f.singular_neutral for f in forms):
        return "neutral"  # a declared "they" is singular they
    genders = {f.gender for f in forms if f.gender}
    return genders.pop() if len(genders) == 1 else None


def accepted_genders(person: DeclaredPerson, tgt_lang: str, src_lang: str) -> tuple[str, ...]:
    """The genders a target form for this person may show, preferred first: from the target language's
    declared pronouns, else the declared gender, else the source language's (or any) declared pronouns."""
    order = [(tgt_lang, person.pronouns_for(tgt_lang))]
    if not order[0][1] and person.gender:
        return (person.gender,)
    order += [(src_lang, person.pronouns_for(src_lang))] + list(person.pronouns)
    for lang, forms in order:
        genders = tuple(dict.fromkeys(g for g in (_form_gender(f, lang) for f in forms) if g))
        if genders:
            return genders
    return (person.gender,) if person.gender else ()


def _declared_person(
    mentions: Sequence[Mention], sheet: EntitySheet
) -> tuple[DeclaredPerson, Mention] | None:
    for m in mentions:
        if m.kind == MentionKind.NAME:
            person = sheet.person_for(m.key)
            if person is not None:
                return person, m
    if sheet.narrator is not None:
        first = [m for m in mentions if m.person == "1" and not m.quoted and m.number != "plur"]
        if first:
            return sheet.narrator, first[0]
    return None


def apply_declarations(
    entities: Sequence[Entity],
    sheet: EntitySheet | None,
    src_lang: str,
    tgt_lang: str,
    seg_ids: Sequence[str],
    first_names: str | None = None,
) -> list[Entity]:
    """Entities with a `declared` evidence item where a source or target name matches the sheet, and (when
    first_names names a list) a weak `first-name` item; gender and confidence resolved again."""
    names = load_first_names(first_names) if first_names else {}
    out = []
    for e in entities:
        extra: list[EvidenceItem] = []
        accepted: tuple[str, ...] = ()
        match = (
            _declared_person(tuple(e.source_mentions) + tuple(e.target_mentions), sheet) if sheet else None
        )
        if match:
            person, m = match
            accepted = accepted_genders(person, tgt_lang, src_lang)
            if accepted:
                where = "source" if m.side == "source" else "target"
                extra.append(
                    EvidenceItem(
                        side="source",
                        seg=m.seg,
                        seg_id=seg_ids[m.seg],
                        start=m.start,
                        end=m.end,
                        text=m.text,
                        gender=accepted[0],
                        kind=EvidenceKind.DECLARED,
                        weight=W_DECLARED,
                        rule=f"entity sheet: {person.name} ({person.describe()}; matched a {where} "
                             f"{'name' if m.kind == MentionKind.NAME else 'first person'})",
                    )
                )
        if names and not accepted:
            for m in tuple(e.source_mentions) + tuple(e.target_mentions):
                first = name_key(m.text).split(" ")[0] if m.kind == MentionKind.NAME else ""
                if first in names:
                    extra.append(
                        EvidenceItem(
                            side=m.side,
                            seg=m.seg,
                            seg_id=seg_ids[m.seg],
                            start=m.start,
                            end=m.start + len(first),
                            text=m.text[: len(first)],
                            gender=names[first],
                            kind=EvidenceKind.FIRST_NAME,
                            weight=W_FIRST_NAME,
                            rule=Rule.FIRST_NAME_LIST,
                        )
                    )
                    break
        if not extra:
            out.append(e)
            continue
        evidence = dedupe(tuple(extra) + tuple(e.evidence))
        if accepted:
            evidence = tuple(extra) + tuple(x for x in evidence if x.kind != "declared")
        # A declaration decides alone: the other evidence stays listed, for the editor to see.
        verdict = resolve_gender([x for x in evidence if x.kind == EvidenceKind.DECLARED] if accepted else evidence)
        out.append(
            replace(
                e, evidence=evidence, gender=verdict.gender, confidence=verdict.confidence, declared=accepted
            )
        )
    return out
