"""A scale file's size and shape checked on the YAML event stream, before any node is built.

PyYAML builds nested nodes recursively, so deep nesting ends in a RecursionError; aliases let a small file
stand for an enormous one (each alias repeats its anchor's whole node, so nine levels of nine aliases make
387 million values); and an alias inside its own anchor makes a node that contains itself. The event
stream is flat, so one pass over it can measure the depth, the expanded size (each anchor's size counted
once, each alias adding it) and the aliases that point into an unfinished node, in constant stack.
"""
from __future__ import annotations

from typing import cast

import yaml

from .limits import MAX_YAML_DEPTH, MAX_YAML_NODES


class ShapeProblem(Exception):
    """The scale file is too deep, too large once expanded, or refers to itself; ``line`` is 1-based."""

    def __init__(self, message: str, line: int | None) -> None:
        super().__init__(message)
        self.message = message
        self.line = line


def check_yaml_shape(text: str) -> None:
    """Raise :class:`ShapeProblem` when ``text`` nests deeper than :data:`MAX_YAML_DEPTH`, would expand to
    more than :data:`MAX_YAML_NODES` values, or holds an alias to a node that contains it.

    YAML syntax errors are left to the composer, which words them.
    """
    open_sizes: list[int] = []          # values inside each open list or mapping so far
    open_anchors: list[str | None] = []
    anchor_size: dict[str, int] = {}
    total = 0

    def add(size: int, mark: yaml.Mark) -> None:
        nonlocal total
        total += size
        if open_sizes:
            open_sizes[-1] += size
        if total > MAX_YAML_NODES:
            raise ShapeProblem(f"the scale file holds more than {MAX_YAML_NODES:,} values once its aliases are "
                               "expanded (see docs/limits.md)", mark.line + 1)

    for event in yaml.parse(text, Loader=yaml.SafeLoader):
        mark = cast(yaml.Mark, event.start_mark)  # the parser's events always carry their place
        if isinstance(event, (yaml.SequenceStartEvent, yaml.MappingStartEvent)):
            if len(open_sizes) >= MAX_YAML_DEPTH:
                raise ShapeProblem(f"lists and mappings are nested more than {MAX_YAML_DEPTH} deep "
                                   "(see docs/limits.md)", mark.line + 1)
            open_sizes.append(0)
            open_anchors.append(event.anchor)
        elif isinstance(event, (yaml.SequenceEndEvent, yaml.MappingEndEvent)):
            size, anchor = open_sizes.pop() + 1, open_anchors.pop()
            if anchor is not None:
                anchor_size[anchor] = size
            if open_sizes:
                open_sizes[-1] += size
        elif isinstance(event, yaml.ScalarEvent):
            if event.anchor is not None:
                anchor_size[event.anchor] = 1
            add(1, mark)
        elif isinstance(event, yaml.AliasEvent):
            if event.anchor in open_anchors:
                raise ShapeProblem(f"the alias *{event.anchor} refers to a list or mapping that contains it",
                                   mark.line + 1)
            add(anchor_size.get(event.anchor, 1) if event.anchor is not None else 1, mark)
