"""One segment side while its mentions are read, and the evidence items made on its words."""

from __future__ import annotations

from dataclasses import dataclass, field

from gendertrace.model import EvidenceItem, ParsedText, Side, Token
from gendertrace.rules import LanguageRules


def make_mark(
    side: Side,
    seg: int,
    seg_id: str,
    tok: Token | list[Token],
    gender: str,
    kind: str,
    weight: float,
    rule: str,
) -> EvidenceItem:
    """An evidence item on one word (or several, joined by spaces) of a segment side."""
    toks = tok if isinstance(tok, list) else [tok]
    start, end = toks[0].start, toks[-1].end
    return EvidenceItem(
        side=side,
        seg=seg,
        seg_id=seg_id,
        start=start,
        end=end,
        text=" ".join(t.text for t in toks),
        gender=gender,
        kind=kind,
        weight=weight,
        rule=rule,
        tokens=tuple(t.i for t in toks),
    )


@dataclass
class SegmentSide:
    """One segment side being read for mentions: its parse, where it stands, its language's rules, the person
    names known from the other side, the quoted words, and the words a mention has already taken."""

    parsed: ParsedText
    seg: int
    seg_id: str
    side: Side
    rules: LanguageRules
    known: set[str] = field(default_factory=set)
    quoted: set[int] = field(default_factory=set)
    claimed: set[int] = field(default_factory=set)
    # Person nouns, also where the tagger took them for something else ("la ingeniera" as a verb) but an
    # article stands before them (set by the mention extraction before its extractors run).
    noun_like: set[int] = field(default_factory=set)

    @property
    def toks(self) -> tuple[Token, ...]:
        return self.parsed.tokens

    @property
    def prefix(self) -> str:
        """Mention ids are the side's initial, the segment index and the head token: "s0.4", "t2.z7"."""
        return f"{self.side[0]}{self.seg}."

    def mark(self, tok: Token | list[Token], gender: str, kind: str, weight: float, rule: str) -> EvidenceItem:
        return make_mark(self.side, self.seg, self.seg_id, tok, gender, kind, weight, rule)
