"""The links stage: every target mention that can be tied to a source chain, by the methods of link.linker."""

from __future__ import annotations

from gendertrace.analysis import Analysis
from gendertrace.link.linker import LinkContext, link_all


def link_sides(a: Analysis) -> None:
    """Reads both sides' resolved mentions and parses, the alignments and the lexicon; writes `links`."""
    a.links = link_all(LinkContext(a.source.resolved(), a.target.resolved(), a.source.parses, a.target.parses,
                                   a.alignments, a.context.lexicon))
