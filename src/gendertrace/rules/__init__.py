"""Language knowledge as data: loads and validates the files in the repository's rules/ folder."""

from gendertrace.rules.loader import (
    LanguageRules,
    PronounForm,
    load_lexicon,
    load_rules,
    rules_digest,
    rules_dir,
)

__all__ = ["LanguageRules", "PronounForm", "load_lexicon", "load_rules", "rules_digest", "rules_dir"]
