"""A problem-collecting reader of composed YAML nodes: plain values only, every problem with its line.

The YAML is composed into nodes (never constructed into objects), so no tag can run code; each value read
through :class:`NodeReader` that is not what was asked for becomes a :class:`~scalewright.errors.Problem`
naming its line and key path, and reading goes on so every problem is reported at once.
"""
from __future__ import annotations

import math
from typing import Any

import yaml

from .errors import Problem, did_you_mean, quoted
from .spec_model import PLAIN_DECIMAL

_PLAIN_TAGS = {f"tag:yaml.org,2002:{t}" for t in ("str", "int", "float", "bool", "null", "map", "seq")}
_TEXT_TAGS = {"tag:yaml.org,2002:timestamp"}  # a date in a title is text to us
_REFUSED = object()  # stands in for a value whose YAML tag was refused


class NodeReader:
    """Walks the composed YAML nodes, collecting problems with line numbers and key paths."""

    def __init__(self, path: str) -> None:
        self.path = path
        self.problems: list[Problem] = []
        self._scalars = yaml.constructor.SafeConstructor()
        self._refused_nodes: set[int] = set()


    def problem(self, node: yaml.Node | None, where: str, message: str) -> None:
        line = node.start_mark.line + 1 if node is not None else None
        self.problems.append(Problem(file=self.path, line=line, where=where, message=message))

    # -- tags and plain values --------------------------------------------------------------------------
    def check_tags(self, node: yaml.Node, where: str = "") -> None:
        """Refuse every tag that is not a plain value; each node is visited once, however many aliases
        repeat it (iteratively, so no nesting depth can exhaust the stack)."""
        seen: set[int] = set()
        pending = [(node, where)]
        while pending:
            node, where = pending.pop()
            if id(node) in seen:
                continue
            seen.add(id(node))
            pending.extend(reversed(self._tag_children(node, where)))

    def _tag_children(self, node: yaml.Node, where: str) -> list[tuple[yaml.Node, str]]:
        if node.tag == "tag:yaml.org,2002:merge":
            self.problem(node, where or "(top)", "YAML merge keys (<<) are not allowed; write the keys out")
            self._refused_nodes.add(id(node))
            return []
        if node.tag not in _PLAIN_TAGS and node.tag not in _TEXT_TAGS:
            self.problem(node, where or "(top)", f"YAML tag {quoted(node.tag)} is not allowed; use plain values")
            self._refused_nodes.add(id(node))
            return []
        children: list[tuple[yaml.Node, str]] = []
        if isinstance(node, yaml.MappingNode):
            for key, value in node.value:
                name = key.value if isinstance(key, yaml.ScalarNode) else "?"
                children += [(key, where), (value, f"{where}.{name}" if where else str(name))]
        elif isinstance(node, yaml.SequenceNode):
            children += [(value, f"{where}[{index}]") for index, value in enumerate(node.value)]
        return children

    def scalar(self, node: yaml.Node) -> Any:
        if id(node) in self._refused_nodes:
            return _REFUSED
        if node.tag in _TEXT_TAGS:
            return str(node.value)
        return self._scalars.construct_object(node, deep=True)

    def mapping(self, node: yaml.Node | None, where: str, allowed: tuple[str, ...] | None) \
            -> dict[str, tuple[yaml.Node, yaml.Node]] | None:
        if node is None:
            return None
        if not isinstance(node, yaml.MappingNode):
            self.problem(node, where, "expected a mapping of keys to values")
            return None
        found: dict[str, tuple[yaml.Node, yaml.Node]] = {}
        for key_node, value_node in node.value:
            if id(key_node) in self._refused_nodes:
                continue  # its tag was refused, and said so, already
            if not isinstance(key_node, yaml.ScalarNode):
                self.problem(key_node, where, "keys must be plain names")
                continue
            key = str(self.scalar(key_node)) if key_node.tag not in _TEXT_TAGS else str(key_node.value)
            here = f"{where}.{key}" if where else key
            if key in found:
                self.problem(key_node, here, f"{key!r} is given twice")
                continue
            if allowed is not None and key not in allowed:
                self.problem(key_node, here, f"unknown key {key!r}{did_you_mean(key, list(allowed))}")
                continue
            found[key] = (key_node, value_node)
        return found

    def text(self, node: yaml.Node, where: str, *, required: bool = True) -> str | None:
        if not isinstance(node, yaml.ScalarNode):
            self.problem(node, where, "expected a text value")
            return None
        value = self.scalar(node)
        if value is None or (isinstance(value, str) and not value.strip()):
            if required:
                self.problem(node, where, "must not be empty")
            return None
        if isinstance(value, bool) or not isinstance(value, (str, int, float)):
            self.problem(node, where, f"expected a text value, got {value!r}")
            return None
        return str(value).strip()

    def number(self, node: yaml.Node, where: str, *, integer: bool = False) -> float | int | None:
        value = self.scalar(node) if isinstance(node, yaml.ScalarNode) else None
        if isinstance(value, bool) or not isinstance(value, (int, float)) or \
                (isinstance(value, float) and not math.isfinite(value)):
            shown = quoted(node.value) if isinstance(node, yaml.ScalarNode) else "a list or mapping"
            self.problem(node, where, f"expected a number, got {shown}")
            return None
        if not PLAIN_DECIMAL.fullmatch(str(node.value).strip()):
            self.problem(node, where, f"expected a plain decimal number, got {quoted(node.value)}")
            return None
        if integer and not float(value).is_integer():
            self.problem(node, where, f"expected a whole number, got {value!r}")
            return None
        return int(value) if integer or isinstance(value, int) else float(value)

    def whole_number(self, node: yaml.Node, where: str) -> int | None:
        """:meth:`number` of a value that must be a whole number."""
        value = self.number(node, where, integer=True)
        return None if value is None else int(value)

    def text_list(self, node: yaml.Node, where: str) -> list[tuple[str, yaml.Node]] | None:
        if isinstance(node, yaml.ScalarNode) and self.scalar(node) is None:
            return []
        if not isinstance(node, yaml.SequenceNode):
            self.problem(node, where, "expected a list, e.g. [a, b, c]")
            return None
        values = []
        for index, child in enumerate(node.value):
            value = self.text(child, f"{where}[{index}]")
            if value is not None:
                values.append((value, child))
        return values
