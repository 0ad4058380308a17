"""Client-declared facts about persons (the entity sheet) and the policies a run applies to neutral forms."""

from gendertrace.declared.policy import Policy, load_policy
from gendertrace.declared.sheet import DeclaredPerson, EntitySheet, load_entity_sheet

__all__ = ["DeclaredPerson", "EntitySheet", "Policy", "load_entity_sheet", "load_policy"]
