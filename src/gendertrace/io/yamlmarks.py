"""Line numbers from YAML: syntax errors on the line at fault, and the line of every key of a document.

PyYAML marks a problem found at the end of the file (a quote or a bracket left open) on the line after the
last one; the line that matters is then where the unclosed construct began, which the error's context mark
gives. `key_lines` reads the lines of keys and items from the loader's node tree (its start marks), so that
a value can be reported on its own line after the document has been loaded.
"""

from __future__ import annotations

from typing import Any

import yaml

from gendertrace.errors import InputError


def yaml_error(path: str, exc: yaml.YAMLError, text: str) -> InputError:
    """A one-line InputError for a YAML syntax error, on the line at fault."""
    mark = getattr(exc, "problem_mark", None)
    context = getattr(exc, "context_mark", None)
    problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
    what = f"{exc.context}, {problem}" if getattr(exc, "context", None) else problem
    line = None
    if mark is not None:
        last = max(1, len(text.splitlines()))
        line = mark.line + 1
        if line > last and context is not None:
            line = context.line + 1  # what was left open at the end of the file began here
        line = min(line, last)
    return InputError(path, line, f"not valid YAML: {what}")


class KeyLines:
    """The 1-based line of each node of a composed YAML document, addressed by its path of keys and indexes.

    `line(("persons", 2, "pronouns", "en"))` is the line of that key; an unknown path gives the line of its
    nearest known ancestor (None when there is none, e.g. for a document that could not be composed).
    """

    def __init__(self, lines: dict[tuple[Any, ...], int], duplicates: list[tuple[tuple[Any, ...], int]]):
        self._lines = lines
        self.duplicates = duplicates  # (path of a key given twice in one mapping, line of the second one)

    def line(self, path: tuple[Any, ...]) -> int | None:
        while path:
            if path in self._lines:
                return self._lines[path]
            path = path[:-1]
        return self._lines.get(())


def key_lines(text: str) -> KeyLines:
    """The lines of the keys and items of the YAML (or JSON) TEXT; empty when it cannot be composed."""
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.YAMLError:
        return KeyLines({}, [])
    lines: dict[tuple[Any, ...], int] = {}
    duplicates: list[tuple[tuple[Any, ...], int]] = []

    def walk(node: yaml.Node, path: tuple[Any, ...]) -> None:
        lines.setdefault(path, node.start_mark.line + 1)
        if isinstance(node, yaml.MappingNode):
            for key, value in node.value:
                name = key.value if isinstance(key, yaml.ScalarNode) else None
                here = (*path, name)
                if here in lines:
                    duplicates.append((here, key.start_mark.line + 1))
                lines[here] = key.start_mark.line + 1
                walk(value, here)
        elif isinstance(node, yaml.SequenceNode):
            for k, item in enumerate(node.value):
                walk(item, (*path, k))

    if root is not None:
        walk(root, ())
    return KeyLines(lines, duplicates)
