"""Review for post-editors: an HTML report, the input XLIFF annotated with notes, and a findings CSV.

All three read the scorer's results JSONL back together with the input that was scored.
"""

from gendertrace.review.csvout import write_csv
from gendertrace.review.html import render_report
from gendertrace.review.results import ReviewDocument, ReviewEvidence, ReviewFinding, load_review
from gendertrace.review.xliff_notes import annotate, write_annotated_xliff

__all__ = [
    "ReviewDocument",
    "ReviewEvidence",
    "ReviewFinding",
    "annotate",
    "load_review",
    "render_report",
    "write_annotated_xliff",
    "write_csv",
]
