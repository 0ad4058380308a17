"""The coreference stage: each side's mentions grouped into chains (coref.sieves), singular "they" settled."""

from __future__ import annotations

from gendertrace.analysis import Analysis, SideAnalysis
from gendertrace.coref.sieves import Resolution, resolve_chains
from gendertrace.mentions.extract import singular_they_ok
from gendertrace.model import Mention
from gendertrace.vocab import Rule


def resolve_coreference(a: Analysis) -> None:
    """Reads each side's mentions and parses; writes each side's `resolution` (its chains, their mentions
    resolved) and drops from `mentions` the "they" that turn out plural.

    Gender agreement helps on the source, which is not being checked; it is off on the target, so that a
    wrongly gendered target pronoun still joins its person."""
    _resolve_side(a.source, use_gender=True)
    _resolve_side(a.target, use_gender=False)


def _resolve_side(side: SideAnalysis, use_gender: bool) -> None:
    def resolve(ms: list[Mention]) -> Resolution:
        return resolve_chains(ms, side.parses, side.side, use_gender=use_gender,
                              role_markers=side.rules.role_markers, thing_pronouns=side.rules.thing_pronouns)

    res = resolve(side.mentions)
    # A "they" stays a mention (of one person, neutral) only where its chain shows a singular antecedent;
    # otherwise it is plural they, and the chains are resolved again without it (removing a mention can change
    # the choices made around it, so the first resolution cannot simply be pruned).
    candidates = [m for m in side.mentions if any(mk.rule == Rule.SINGULAR_THEY for mk in m.marks)]
    if candidates:
        members = {c.id: list(c.mentions) for c in res.chains}
        drop = {m.id for m in candidates
                if not singular_they_ok(m, members.get(res.chain_of.get(m.id, ""), []), list(side.parses))}
        if drop:
            side.mentions = [m for m in side.mentions if m.id not in drop]
            res = resolve(side.mentions)
    side.resolution = res
