"""The ``groups`` key of a scale file: grouping columns, their ordered levels and named codes."""
from __future__ import annotations

import yaml

from .yaml_nodes import NodeReader


def read_groups(checker: NodeReader, node: yaml.Node,
            codes: dict[str, dict[str, str]] | None = None) -> tuple[list[str], dict[str, tuple[str, ...]]]:
    """``groups``: column names, each plain, ``{column: [levels in order]}`` or ``{column: {code: name}}``.

    A mapping names the codes of a coded column (``{gender: {1: woman, 2: man}}``): its names, in the order
    listed, are the column's ordered levels, and their codes are recorded in ``codes``.
    """
    codes = {} if codes is None else codes
    groups: list[str] = []
    levels: dict[str, tuple[str, ...]] = {}
    if isinstance(node, yaml.ScalarNode) and checker.scalar(node) is None:
        return groups, levels
    if not isinstance(node, yaml.SequenceNode):
        checker.problem(node, "groups", "expected a list of column names, e.g. [shift, site]")
        return groups, levels
    for index, child in enumerate(node.value):
        where = f"groups[{index}]"
        if isinstance(child, yaml.MappingNode):
            entry = checker.mapping(child, where, None) or {}
            if len(entry) != 1:
                checker.problem(child, where, "an ordered group is one column with its levels, e.g. "
                                              "{tenure: [under 1 year, 1-4 years, 5+ years]}, or with names for "
                                              "its codes, e.g. {gender: {1: woman, 2: man}}")
                continue
            (column, (_, levels_node)), = entry.items()
            if isinstance(levels_node, yaml.MappingNode):
                level_names = _level_names(checker, levels_node, f"{where}.{column}")
                if level_names is None:
                    continue
                codes[column] = level_names
                named_levels = list(level_names.values())
            else:
                named_levels = None
            ordered = named_levels if named_levels is not None else \
                [text for text, _ in checker.text_list(levels_node, f"{where}.{column}") or []]
            if len(set(ordered)) != len(ordered):
                checker.problem(levels_node, f"{where}.{column}", "a level is listed twice")
                continue
            if not ordered:
                checker.problem(levels_node, f"{where}.{column}", "the list of levels is empty")
                continue
            levels[column] = tuple(ordered)
        else:
            named = checker.text(child, where)
            if named is None:
                continue
            column = named
        if column in groups:
            checker.problem(child, where, f"group column {column!r} is listed twice")
        else:
            groups.append(column)
    return groups, levels


def _level_names(checker: NodeReader, node: yaml.MappingNode, where: str) -> dict[str, str] | None:
    """``{1: woman, 2: man}``: code (as text, a whole number written plainly) -> level name; None if broken."""
    entries = checker.mapping(node, where, None)
    if entries is None:
        return None
    named: dict[str, str] = {}
    for code, (_, name_node) in entries.items():
        name = checker.text(name_node, f"{where}.{code}")
        if name is None:
            return None
        key = str(code).strip()
        try:  # 1, 1.0 and "1" are the same code
            number = float(key)
            key = str(int(number)) if number.is_integer() else key
        except ValueError:
            pass
        if key in named:
            checker.problem(name_node, f"{where}.{code}", f"the code {code!r} is named twice")
            return None
        named[key] = name
    if len(set(named.values())) != len(named):
        checker.problem(node, where, "two codes have the same name")
        return None
    if not named:
        checker.problem(node, where, "the mapping of codes to names is empty")
        return None
    return named
