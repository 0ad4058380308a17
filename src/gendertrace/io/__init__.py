"""Input readers: TSV, CSV and JSONL document sets into `gendertrace.model.Document`s."""

from gendertrace.io.readers import (
    FORMATS,
    ReadReport,
    SegmentRef,
    detect_format,
    is_untranslated,
    iter_documents,
    read_corpus,
    read_corpus_with_report,
    untranslated_in,
)

__all__ = [
    "FORMATS",
    "ReadReport",
    "SegmentRef",
    "detect_format",
    "is_untranslated",
    "iter_documents",
    "read_corpus",
    "read_corpus_with_report",
    "untranslated_in",
]
