"""Dependency labels normalised to UD, so English (ClearNLP labels) and Spanish/French (UD) read alike."""

from __future__ import annotations

# ClearNLP label -> UD label. Labels with no UD counterpart of the same shape (prep, pobj, attr, acomp, agent)
# are kept: downstream code that needs them (predicate nominals, by-agents) handles both shapes explicitly.
# Mapping after the UD v2 guidelines' relation list and spaCy's English label scheme (common practice, no source).
CLEAR_TO_UD = {
    "nsubjpass": "nsubj:pass",
    "csubjpass": "csubj:pass",
    "dobj": "obj",
    "dative": "iobj",
    "poss": "nmod:poss",
    "auxpass": "aux:pass",
    "relcl": "acl:relcl",
    "neg": "advmod",
    "npadvmod": "obl:npmod",
    "predet": "det:predet",
    "quantmod": "advmod",
    "nn": "compound",
    "possessive": "case",
    "oprd": "xcomp",
    "intj": "discourse",
    "meta": "dep",
}


def normalise_deprel(label: str) -> str:
    """Return the UD form of a dependency label from any backend ("ROOT" becomes "root")."""
    low = label.lower()
    return CLEAR_TO_UD.get(low, low)


# Named-entity labels that denote persons, per pipeline family (spaCy en: PERSON; es/fr: PER; UD MISC: none).
PERSON_LABELS = {"PER", "PERSON"}


def normalise_entity(label: str) -> str:
    return "PER" if label in PERSON_LABELS else label
