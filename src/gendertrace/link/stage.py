"""The links stage: every target mention that can be tied to a source chain, by the methods of link.linker."""

from __future__ import annotations

from gendertrace.analysis import Analysis
from gendertrace.link.linker import link_mentions


def link_sides(a: Analysis) -> None:
    """Reads both sides' mentions, chains and parses, the alignments and the lexicon; writes `links`."""
    a.links = link_mentions(a.source.mentions, a.target.mentions, a.source.resolution, a.target.resolution,
                            a.source.parses, a.target.parses, a.alignments, a.context.lexicon)
