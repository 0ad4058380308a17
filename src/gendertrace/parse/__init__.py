"""Parsing layer: backends fill one internal document model (see gendertrace.model.ParsedText)."""

from gendertrace.parse.base import Parser, get_parser
from gendertrace.parse.labels import normalise_deprel

__all__ = ["Parser", "get_parser", "normalise_deprel"]
