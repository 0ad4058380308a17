"""The shared vocabularies of the scoring core: genders, kinds, evidence rules and UD relation sets.

Every value is a `StrEnum`, so it compares, hashes and serialises exactly as the plain string it stands for:
results lines keep their strings, and code reading them back as strings keeps working.
"""

from __future__ import annotations

from enum import StrEnum


class Gender(StrEnum):
    """A gender a word gives a person (UD's Gender values, mapped in `UD_GENDER`)."""

    FEM = "fem"
    MASC = "masc"
    NEUTRAL = "neutral"


# The two genders a finding can be about; a neutral form is judged by the policy instead.
BINARY: frozenset[str] = frozenset({Gender.FEM, Gender.MASC})
GENDERS: tuple[str, ...] = tuple(g.value for g in Gender)

# UD's Gender values mapped onto the project's vocabulary (UD guidelines, "Gender" feature page).
UD_GENDER = {"Fem": Gender.FEM, "Masc": Gender.MASC, "Neut": Gender.NEUTRAL}


class Side(StrEnum):
    SOURCE = "source"
    TARGET = "target"


class MentionKind(StrEnum):
    NAME = "name"
    NOUN = "noun"
    PRONOUN = "pronoun"
    ZERO = "zero"  # the unexpressed subject of a finite verb (pro-drop languages)


# Mentions that name or describe a person, as opposed to pronouns and zero subjects that take one up.
NOMINAL_KINDS: frozenset[str] = frozenset({MentionKind.NAME, MentionKind.NOUN})


class EvidenceKind(StrEnum):
    PRONOUN = "pronoun"
    MORPHOLOGY = "morphology"  # determiner or noun inflection
    AGREEMENT = "agreement"  # adjective or participle agreeing with the person
    LEXICAL = "lexical"  # an inherently gendered noun (mother)
    TITLE = "title"  # an honorific
    DECLARED = "declared"  # the entity sheet
    FIRST_NAME = "first-name"  # weak, opt-in


class FindingKind(StrEnum):
    CONTRADICTION = "contradiction"  # the evidence, led by the source, settles the gender; the word disagrees
    INCONSISTENCY = "inconsistency"  # the source is silent; the target gives the person two genders
    ASSUMPTION = "assumption"  # nothing in the source speaks to the gender; the target commits (informational)


FINDING_KINDS: tuple[str, ...] = tuple(k.value for k in FindingKind)  # plain strings: column and key names


class LinkMethod(StrEnum):
    NAME = "name"
    LEXICON = "lexicon"
    ALIGNMENT = "alignment"
    PROJECTION = "projection"
    CHAIN = "chain"
    NARRATOR = "narrator"


class Rule(StrEnum):
    """The rule that produced an evidence item; its value is the display string written to the results.

    `is_predicate`: a predicate agreeing with its subject, checked as a reference of its own (never grouped
    with the noun phrase). `never_flags_alone`: evidence, but a target reference made only of it is not judged.
    Evidence from the entity sheet carries a free-text rule naming the person and is not a member.
    """

    GENDERED_NOUN = "gendered noun"
    MASCULINE_NOUN_FORM = "masculine noun form"
    GENERIC_MASCULINE_NOUN = "generic masculine noun"
    NEUTRAL_FORM = "neutral form"
    HONORIFIC = "honorific"
    DETERMINER_AGREEMENT = "determiner agreement"
    ADJECTIVE_AGREEMENT = "adjective agreement"
    PERSONAL_PRONOUN = "personal pronoun"
    POSSESSIVE_PRONOUN = "possessive pronoun"
    REFLEXIVE_PRONOUN = "reflexive pronoun"
    SINGULAR_THEY = "singular they"
    DEMONSTRATIVE_SPEAKER = "demonstrative speaker"
    DEMONSTRATIVE_LATTER = "demonstrative latter"
    OBJECT_CLITIC_PARTICIPLE = "participle agreeing with an object clitic"
    AGREEING_INTENSIFIER = "agreeing intensifier"
    PREDICATIVE_WITH_COPULA = "predicative with copula"
    PARTICIPLE_WITH_AGREEING_AUX = "participle with agreeing auxiliary"
    SECONDARY_PREDICATE = "secondary predicate"
    # A controlled clause's participle agrees with the controlling subject, but it is judged inside the noun
    # phrase's group like an attributive word (as it always was): not flagged as a predicate.
    CONTROLLED_CLAUSE_PARTICIPLE = "participle of a controlled clause"
    FIRST_NAME_LIST = "first-name list (weak, opt-in)"

    @property
    def is_predicate(self) -> bool:
        return self in _PREDICATES

    @property
    def never_flags_alone(self) -> bool:
        return self is Rule.GENERIC_MASCULINE_NOUN

    @classmethod
    def pronoun(cls, pron_type: str) -> Rule:
        """The rule of a pronoun's own mark, by its type (personal, possessive, reflexive)."""
        return cls(f"{pron_type} pronoun")


_PREDICATES = frozenset({Rule.PREDICATIVE_WITH_COPULA, Rule.PARTICIPLE_WITH_AGREEING_AUX, Rule.SECONDARY_PREDICATE})
# The same flags as sets of display strings, for evidence items whose rule may be free text (entity sheet).
PREDICATE_RULES: frozenset[str] = frozenset(r for r in Rule if r.is_predicate)
NEVER_FLAGS_ALONE: frozenset[str] = frozenset(r for r in Rule if r.never_flags_alone)


class NeutralRule(StrEnum):
    """Kinds of forms that deliberately mark no binary gender (`mentions.neutral.neutral_forms`)."""

    PRONOUN = "neutral pronoun"
    FORM = "neutral form"
    DOUBLED = "doubled form"


# UD relation sets (UD v2 guidelines, relation list). The parse layer maps English ClearNLP labels to UD
# (parse/labels.py); "prep", "pobj", "attr", "agent" and "acomp" have no UD counterpart of the same shape and
# stay, so code that reads them says so.
SUBJECT_RELS = frozenset({"nsubj", "nsubj:pass"})
# Relations that mean a clause already has a subject, overt or expletive.
SUBJECT_LIKE_RELS = frozenset({"nsubj", "nsubj:pass", "csubj", "csubj:pass", "expl", "expl:pass", "expl:impers",
                               "expl:subj"})
OBJECT_RELS = frozenset({"obj", "iobj"})
# Auxiliaries and copulas stand for the clause head they hang on.
CLAUSE_FUNCTION_RELS = frozenset({"cop", "aux", "aux:pass", "aux:tense"})
NAME_LINK_RELS = frozenset({"flat", "flat:name", "compound", "appos"})
RELATIVE_CLAUSE_RELS = frozenset({"acl:relcl"})
