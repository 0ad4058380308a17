"""The mentions stage: person names known to each side, then every person mention of every segment."""

from __future__ import annotations

from gendertrace.analysis import Analysis
from gendertrace.mentions.extract import extract_mentions
from gendertrace.mentions.names import person_names, shared_unlabelled_names


def find_mentions(a: Analysis) -> None:
    """Reads both sides' parses and the entity sheet; writes each side's `names` and `mentions`.

    A side's names are those its recogniser labels, those the two sides share word for word where only one
    side has a recogniser, and the entity sheet's; each side's mentions are extracted knowing the other side's
    names (a proper noun matching a name across is a name)."""
    src, tgt = a.source, a.target
    src.names = person_names(src.parses)
    tgt.names = person_names(tgt.parses)
    shared = shared_unlabelled_names(src.parses, tgt.parses, *a.context.recognisers)
    src.names |= shared
    tgt.names |= shared
    sheet = a.context.entity_sheet
    if sheet is not None:
        # Declared names count as names on both sides, whatever the NER says.
        src.names |= sheet.name_keys
        tgt.names |= sheet.name_keys
    seg_ids = a.seg_ids
    for side, other in ((src, tgt), (tgt, src)):
        side.mentions = [m for k, p in enumerate(side.parses)
                         for m in extract_mentions(p, k, seg_ids[k], side.side, side.rules, other.names)]
