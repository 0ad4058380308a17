"""The baseline a quick script would be: a segment-level majority vote, with no coreference and no alignment.

When every gendered person word of a source segment has one gender, every gendered person word of the target
segment with the other gender is flagged. Person words come from the same mention extractor as the engine's.
"""

from __future__ import annotations

from dataclasses import dataclass

from gendertrace.mentions.extract import extract_mentions
from gendertrace.model import ParsedDocument
from gendertrace.rules import LanguageRules


@dataclass(frozen=True)
class BaselineFlag:
    seg_id: str
    start: int
    end: int
    text: str
    expected: str
    found: str


def baseline_findings(
    pd: ParsedDocument, src_rules: LanguageRules, tgt_rules: LanguageRules
) -> list[BaselineFlag]:
    out = []
    for k, seg in enumerate(pd.document.segments):
        src_marks = [
            mk for m in extract_mentions(pd.source[k], k, seg.seg_id, "source", src_rules) for mk in m.marks
        ]
        genders = {mk.gender for mk in src_marks if mk.gender in ("fem", "masc")}
        if len(genders) != 1:
            continue
        expected = genders.pop()
        for m in extract_mentions(pd.target[k], k, seg.seg_id, "target", tgt_rules):
            for mk in m.marks:
                if mk.gender in ("fem", "masc") and mk.gender != expected:
                    out.append(BaselineFlag(seg.seg_id, mk.start, mk.end, mk.text, expected, mk.gender))
    return out
