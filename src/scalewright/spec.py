"""The scale file: read it safely, check every part of it, and give back an immutable ``ScaleSpec``.

The YAML is composed into nodes (never constructed into objects), so no tag can run code, and every
problem can name the line it stands on. All problems are collected and reported at once.
"""
from __future__ import annotations

import difflib
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import yaml

from .errors import Problem, SpecError, quoted
from .limits import MAX_ANSWER_SPAN, MAX_ANSWER_VALUE, MAX_MISSING_CODE, MAX_YAML_BYTES
from .yaml_guard import ShapeProblem, check_yaml_shape

SCORE_METHODS = ("mean", "sum")
TOP_KEYS = ("version", "title", "id_column", "groups", "weight", "missing_texts", "response", "scales")
RESPONSE_KEYS = ("min", "max", "labels", "missing_codes", "missing_texts")
#: texts read as "no answer" unless the scale file lists its own (``missing_texts``); matched as labels are
DEFAULT_MISSING_TEXTS = ("NA", "N/A", "#N/A")
SCALE_KEYS = ("title", "items", "reverse", "score", "min_answered", "wording", "response")
SCALE_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_.-]*$")
_PLAIN_TAGS = {f"tag:yaml.org,2002:{t}" for t in ("str", "int", "float", "bool", "null", "map", "seq")}
_TEXT_TAGS = {"tag:yaml.org,2002:timestamp"}  # a date in a title is text to us
_REFUSED = object()  # stands in for a value whose YAML tag was refused
#: a number as the scale file may write one: plain decimal (YAML 1.1 would also read 0x1F, 0o17, 1_000
#: and 1:30 as numbers, which nobody means in an answer format)
PLAIN_DECIMAL = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", re.ASCII)


def normalise_answer_text(text: str) -> str:
    """Case- and whitespace-insensitive form of an answer text."""
    return " ".join(str(text).split()).casefold()


@dataclass(frozen=True)
class ResponseFormat:
    """The answer format of rating items: the code range, answer texts and "no answer" codes."""

    min: int
    max: int
    labels: Mapping[int, str] = field(default_factory=dict)
    missing_codes: tuple[float, ...] = ()
    #: texts that mean "no answer" (matched ignoring case and spacing, as labels are)
    missing_texts: tuple[str, ...] = DEFAULT_MISSING_TEXTS

    @property
    def levels(self) -> tuple[int, ...]:
        return tuple(range(self.min, self.max + 1))

    @property
    def midpoint(self) -> float:
        return (self.min + self.max) / 2

    def code_for_text(self) -> dict[str, int]:
        """Normalised answer text -> code."""
        return {normalise_answer_text(text): code for code, text in self.labels.items()}

    def missing_text_for(self) -> dict[str, str]:
        """Normalised "no answer" text -> the text as the scale file lists it."""
        return {normalise_answer_text(text): text for text in self.missing_texts}

    def label(self, code: int) -> str:
        return self.labels.get(code, str(code))

    def to_dict(self) -> dict[str, Any]:
        return {"min": self.min, "max": self.max, "labels": {str(k): v for k, v in self.labels.items()},
                "missing_codes": list(self.missing_codes), "missing_texts": list(self.missing_texts)}


@dataclass(frozen=True)
class Scale:
    """One multi-item scale as the scale file defines it."""

    name: str
    title: str
    items: tuple[str, ...]
    reverse: tuple[str, ...]
    score: str
    min_answered: int | float
    response: ResponseFormat
    wording: Mapping[str, str] = field(default_factory=dict)
    line: int | None = None

    @property
    def k(self) -> int:
        return len(self.items)

    def is_reversed(self, item: str) -> bool:
        return item in self.reverse

    def required_answered(self) -> int:
        """How many items a respondent must have answered to get a score."""
        if isinstance(self.min_answered, int):
            return self.min_answered
        return max(1, math.ceil(self.min_answered * self.k - 1e-9))

    def describe_rule(self) -> str:
        need = self.required_answered()
        how = "mean of the answered items" if self.score == "mean" else \
            f"sum prorated to {self.k} items (mean of the answered items x {self.k})"
        return f"{how}; needs at least {need} of {self.k} items answered"

    def to_dict(self) -> dict[str, Any]:
        return {"title": self.title, "items": list(self.items), "reverse": list(self.reverse),
                "score": self.score, "min_answered": self.min_answered,
                "required_answered": self.required_answered(), "response": self.response.to_dict()}


@dataclass(frozen=True)
class ScaleSpec:
    """A validated scale file."""

    title: str
    id_column: str | None
    groups: tuple[str, ...]
    response: ResponseFormat
    scales: Mapping[str, Scale]
    path: str
    version: int = 1
    #: group column -> its levels in order, for columns given as ``{column: [level, ...]}`` in ``groups``
    group_levels: Mapping[str, tuple[str, ...]] = field(default_factory=dict)
    #: texts that mean "no answer" in the columns that are not items (groups, tallies)
    missing_texts: tuple[str, ...] = DEFAULT_MISSING_TEXTS
    #: group column -> {code as written in the data: level name}, for ``{column: {1: woman, 2: man}}``;
    #: the names (in the order listed) are also in ``group_levels``
    group_codes: Mapping[str, Mapping[str, str]] = field(default_factory=dict)
    #: the column of survey weights (``weight:``), or None
    weight: str | None = None

    @property
    def items(self) -> tuple[str, ...]:
        """Every item of every scale, in first-mentioned order, each once."""
        seen: dict[str, None] = {}
        for scale in self.scales.values():
            for item in scale.items:
                seen.setdefault(item, None)
        return tuple(seen)

    def response_for(self, item: str) -> ResponseFormat:
        for scale in self.scales.values():
            if item in scale.items:
                return scale.response
        return self.response

    def wording_for(self, item: str) -> str | None:
        for scale in self.scales.values():
            if item in scale.wording:
                return scale.wording[item]
        return None

    def scale(self, name: str) -> Scale:
        if name not in self.scales:
            from .errors import UsageError

            raise UsageError(f"no scale named {name!r} in {self.path}{did_you_mean(name, list(self.scales))}")
        return self.scales[name]


# ----------------------------------------------------------------------------------------------------------
# reading


def did_you_mean(word: str, choices: list[str]) -> str:
    """'; did you mean X?' for the closest of ``choices`` (difflib's default cut-off), else ''."""
    close = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


class _Checker:
    """Walks the composed YAML nodes, collecting problems with line numbers and key paths."""

    def __init__(self, path: str) -> None:
        self.path = path
        self.problems: list[Problem] = []
        self._scalars = yaml.constructor.SafeConstructor()
        self._refused_nodes: set[int] = set()
        self.top_response_given = False  # an invalid top-level format is reported once, not per scale
        self.top_missing_texts: tuple[str, ...] | None = None  # the top-level ``missing_texts``, if given
        self.top_missing_texts_node: yaml.Node | None = None
        # each format's "no answer" texts before its labels removed any default one, and whether the scale
        # file listed them: a scale's own format inherits these
        self._texts_origin: dict[int, tuple[tuple[str, ...], bool]] = {}
        self._last_texts_origin: tuple[tuple[str, ...], bool] = (DEFAULT_MISSING_TEXTS, False)

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

    # -- parts of the file ----------------------------------------------------------------------------
    def response(self, node: yaml.Node | None, where: str, base: ResponseFormat | None) -> ResponseFormat | None:
        keys = self.mapping(node, where, RESPONSE_KEYS)
        if keys is None:
            if base is None:
                self.problem(node, where, "the answer format needs at least `min` and `max`")
            return base
        low = self.number(keys["min"][1], f"{where}.min", integer=True) if "min" in keys else \
            (base.min if base else None)
        high = self.number(keys["max"][1], f"{where}.max", integer=True) if "max" in keys else \
            (base.max if base else None)
        for name in ("min", "max"):
            if name not in keys and base is None:
                self.problem(node, f"{where}.{name}", f"`{name}` is required")
        if low is None or high is None:
            return None
        if low >= high:
            self.problem(keys.get("min", keys.get("max", (node, node)))[1], where,
                         f"min ({low}) must be less than max ({high})")
            return None
        at = keys.get("max", keys.get("min", (node, node)))[1]
        if max(abs(low), abs(high)) > MAX_ANSWER_VALUE:
            self.problem(at, where, f"the answer range {low}..{high} goes beyond +-{MAX_ANSWER_VALUE:,}, which no "
                                    "rating format does (see docs/limits.md)")
            return None
        if high - low > MAX_ANSWER_SPAN:
            self.problem(at, where, f"the answer range {low}..{high} has {high - low + 1:,} levels; rating answers "
                                    f"have at most {MAX_ANSWER_SPAN + 1:,} (max - min <= {MAX_ANSWER_SPAN:,}; "
                                    "see docs/limits.md)")
            return None
        range_changed = base is not None and ("min" in keys or "max" in keys) and (low, high) != (base.min, base.max)
        labels: dict[int, str] = {}
        if "labels" in keys:
            label_map = self.mapping(keys["labels"][1], f"{where}.labels", None)
            seen_texts: dict[str, int] = {}
            for code_text, (code_node, text_node) in (label_map or {}).items():
                here = f"{where}.labels.{code_text}"
                code = self.number(code_node, here, integer=True)
                text = self.text(text_node, here)
                if code is None or text is None:
                    continue
                if not low <= code <= high:
                    self.problem(code_node, here, f"label code {code} is outside the answer range {low}..{high}")
                    continue
                norm = normalise_answer_text(text)
                if norm in seen_texts:
                    self.problem(text_node, here, f"answer text {text!r} is also the label of {seen_texts[norm]}")
                    continue
                seen_texts[norm] = code
                labels[code] = text
        elif base is not None and not range_changed:
            labels = dict(base.labels)
        missing: list[float] = []
        if "missing_codes" in keys:
            codes_node = keys["missing_codes"][1]
            if isinstance(codes_node, yaml.SequenceNode):
                for index, child in enumerate(codes_node.value):
                    code = self.number(child, f"{where}.missing_codes[{index}]")
                    if code is not None and abs(code) > MAX_MISSING_CODE:
                        self.problem(child, f"{where}.missing_codes[{index}]",
                                     f"missing code {code:g} is larger than {MAX_MISSING_CODE:.0e} (see docs/limits.md)")
                    elif code is not None:
                        missing.append(code)
            elif not (isinstance(codes_node, yaml.ScalarNode) and self.scalar(codes_node) is None):
                self.problem(codes_node, f"{where}.missing_codes", "expected a list of codes, e.g. [9, 99]")
        elif base is not None:
            missing = list(base.missing_codes)
        for code in missing:
            if low <= code <= high:
                at = keys["missing_codes"][1] if "missing_codes" in keys else node
                self.problem(at, f"{where}.missing_codes",
                             f"missing code {code:g} lies inside the answer range {low}..{high}; "
                             "it would be confused with an answer")
        for code, text in labels.items():
            # a label that reads as another code's number would be that code in one column and this one in
            # another, depending on whether the column holds any word
            number = float(text) if PLAIN_DECIMAL.fullmatch(text) else None
            if number is not None and number != code and (low <= number <= high or number in missing):
                self.problem(keys["labels"][1] if "labels" in keys else node, f"{where}.labels.{code}",
                             f"the label {quoted(text)} of code {code} is the number of another code; "
                             "a cell holding it would be ambiguous")
        texts = self.missing_texts(node, keys, where, base, labels)
        fmt = ResponseFormat(min=int(low), max=int(high), labels=MappingProxyType(dict(sorted(labels.items()))),
                             missing_codes=tuple(missing), missing_texts=texts)
        self._texts_origin[id(fmt)] = self._last_texts_origin
        return fmt

    def text_values(self, node: yaml.Node, where: str) -> tuple[str, ...] | None:
        """``missing_texts``: a list of texts, none of them a number (numbers are ``missing_codes``)."""
        listed = self.text_list(node, where)
        if listed is None:
            return None
        texts: list[str] = []
        for index, (text, child) in enumerate(listed):
            if PLAIN_DECIMAL.fullmatch(text):
                self.problem(child, f"{where}[{index}]", f"{quoted(text)} is a number: list it in missing_codes")
            elif normalise_answer_text(text) not in map(normalise_answer_text, texts):
                texts.append(text)
        return tuple(texts)

    def missing_texts(self, node: yaml.Node, keys: dict, where: str, base: ResponseFormat | None,
                      labels: Mapping[int, str]) -> tuple[str, ...]:
        """This format's "no answer" texts: its own list, else its base format's, else the top-level list,
        else the default. A text the scale file lists that is also an answer label is an error; a default
        text that is a label is simply not missing (the label wins)."""
        if "missing_texts" in keys:
            texts, explicit = self.text_values(keys["missing_texts"][1], f"{where}.missing_texts") or (), True
            at = keys["missing_texts"][1]
        elif base is not None:
            texts, explicit = self._texts_origin.get(id(base), (base.missing_texts, False))
            at = node
        elif self.top_missing_texts is not None:
            texts, explicit, at = self.top_missing_texts, True, self.top_missing_texts_node
        else:
            texts, explicit, at = DEFAULT_MISSING_TEXTS, False, node
        self._last_texts_origin = (texts, explicit)
        label_texts = {normalise_answer_text(text) for text in labels.values()}
        kept = []
        for text in texts:
            if normalise_answer_text(text) not in label_texts:
                kept.append(text)
            elif explicit:
                self.problem(at, f"{where}.missing_texts", f"{quoted(text)} is both an answer label and a missing "
                                                           "text; a text cannot be both")
        return tuple(kept)

    def scale(self, name: str, name_node: yaml.Node, node: yaml.Node, base: ResponseFormat | None) -> Scale | None:
        where = f"scales.{name}"
        if not SCALE_NAME.match(name):
            self.problem(name_node, where, f"scale name {name!r} must start with a letter and hold only "
                                           "letters, digits, '_', '-' or '.' (it becomes a column name)")
        keys = self.mapping(node, where, SCALE_KEYS)
        if keys is None:
            return None
        if "items" not in keys:
            self.problem(node, f"{where}.items", "every scale needs a list of `items`")
            return None
        listed = self.text_list(keys["items"][1], f"{where}.items")
        if listed is None:
            return None
        if not listed:
            self.problem(keys["items"][1], f"{where}.items", "the list of items is empty")
            return None
        items: list[str] = []
        for item, item_node in listed:
            if item in items:
                self.problem(item_node, f"{where}.items", f"item {item!r} is listed twice")
            else:
                items.append(item)
        reverse: list[str] = []
        if "reverse" in keys:
            for item, item_node in self.text_list(keys["reverse"][1], f"{where}.reverse") or []:
                if item not in items:
                    self.problem(item_node, f"{where}.reverse",
                                 f"{item!r} is not one of this scale's items{did_you_mean(item, items)}")
                elif item not in reverse:
                    reverse.append(item)
        score = "mean"
        if "score" in keys:
            score_value = self.text(keys["score"][1], f"{where}.score")
            if score_value not in SCORE_METHODS:
                if score_value is not None:
                    self.problem(keys["score"][1], f"{where}.score",
                                 f"score must be mean or sum, not {score_value!r}{did_you_mean(score_value, list(SCORE_METHODS))}")
            else:
                score = score_value
        min_answered: int | float = 1.0
        if "min_answered" in keys:
            min_answered = self.min_answered(keys["min_answered"][1], f"{where}.min_answered", len(items)) or 1.0
        wording: dict[str, str] = {}
        if "wording" in keys:
            for item, (item_node, text_node) in (self.mapping(keys["wording"][1], f"{where}.wording", None) or {}).items():
                if item not in items:
                    self.problem(item_node, f"{where}.wording.{item}",
                                 f"{item!r} is not one of this scale's items{did_you_mean(item, items)}")
                    continue
                text = self.text(text_node, f"{where}.wording.{item}")
                if text is not None:
                    wording[item] = text
        response = base
        if "response" in keys:
            response = self.response(keys["response"][1], f"{where}.response", base)
        if response is None:
            if base is None and "response" not in keys and not self.top_response_given:
                self.problem(node, f"{where}.response", "no answer format: give a top-level `response` or one here")
            return None
        title = name
        if "title" in keys:
            title = self.text(keys["title"][1], f"{where}.title") or name
        return Scale(name=name, title=title, items=tuple(items), reverse=tuple(reverse), score=score,
                     min_answered=min_answered, response=response, wording=MappingProxyType(wording),
                     line=name_node.start_mark.line + 1)

    def min_answered(self, node: yaml.Node, where: str, k: int) -> int | float | None:
        value = self.scalar(node) if isinstance(node, yaml.ScalarNode) else None
        if isinstance(value, bool) or not isinstance(value, (int, float)) or \
                not PLAIN_DECIMAL.fullmatch(str(node.value).strip()):
            self.problem(node, where, "min_answered must be a whole count of items (1..k) or a fraction in (0, 1]")
            return None
        if isinstance(value, int):
            if not 1 <= value <= k:
                self.problem(node, where, f"min_answered {value} must be between 1 and {k}, the number of items")
                return None
            return value
        if not 0 < value <= 1:
            self.problem(node, where, f"min_answered {value} as a fraction must lie in (0, 1]; "
                                      "use a whole number for a count of items")
            return None
        return float(value)


def check_spec(path: str | Path) -> tuple[ScaleSpec | None, list[Problem]]:
    """Read and check a scale file; return the spec (None if unusable) and every problem found."""
    path_text = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        return None, [Problem(file=path_text, message="scale file not found")]
    except IsADirectoryError:
        return None, [Problem(file=path_text, message="is a folder, not a scale file")]
    except OSError as error:
        return None, [Problem(file=path_text, message=f"cannot read: {error.strerror}")]
    if len(raw) > MAX_YAML_BYTES:
        return None, [Problem(file=path_text, message=f"the scale file is larger than {MAX_YAML_BYTES // 2**20} MiB "
                                                      "(see docs/limits.md)")]
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        return None, [Problem(file=path_text, message=f"not UTF-8 text (byte 0x{raw[error.start]:02x} at offset "
                                                      f"{error.start}); save it as UTF-8")]
    try:
        check_yaml_shape(text)
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except ShapeProblem as problem:
        return None, [Problem(file=path_text, line=problem.line, message=problem.message)]
    except RecursionError:  # not reached within the depth limit; kept so no input can show a traceback
        return None, [Problem(file=path_text, message="the scale file is nested too deeply")]
    except yaml.MarkedYAMLError as error:
        mark = error.problem_mark or error.context_mark
        return None, [Problem(file=path_text, line=mark.line + 1 if mark else None,
                              message=f"not valid YAML: {error.problem or error.context}")]
    except yaml.YAMLError as error:
        return None, [Problem(file=path_text, message=f"not valid YAML: {str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__}")]
    checker = _Checker(path_text)
    if root is None:
        return None, [Problem(file=path_text, message="the scale file is empty")]
    checker.check_tags(root)
    keys = checker.mapping(root, "", TOP_KEYS)
    if keys is None:
        return None, checker.problems
    version = 1
    if "version" in keys:
        value = checker.number(keys["version"][1], "version", integer=True)
        if value is not None and value != 1:
            checker.problem(keys["version"][1], "version", f"version {value} is not supported; this tool reads version 1")
    title = checker.text(keys["title"][1], "title") if "title" in keys else None
    id_column = checker.text(keys["id_column"][1], "id_column") if "id_column" in keys else None
    group_codes: dict[str, dict[str, str]] = {}
    groups, group_levels = _groups(checker, keys["groups"][1], group_codes) if "groups" in keys else ([], {})
    weight = checker.text(keys["weight"][1], "weight") if "weight" in keys else None
    checker.top_response_given = "response" in keys
    if "missing_texts" in keys:
        checker.top_missing_texts = checker.text_values(keys["missing_texts"][1], "missing_texts") or ()
        checker.top_missing_texts_node = keys["missing_texts"][1]
    base = checker.response(keys["response"][1], "response", None) if "response" in keys else None
    scales: dict[str, Scale] = {}
    if "scales" not in keys:
        checker.problem(root, "scales", "the scale file defines no `scales`")
    else:
        scale_nodes = checker.mapping(keys["scales"][1], "scales", None) or {}
        if not scale_nodes and isinstance(keys["scales"][1], yaml.MappingNode):
            checker.problem(keys["scales"][1], "scales", "no scales are defined")
        for name, (name_node, node) in scale_nodes.items():
            scale = checker.scale(name, name_node, node, base)
            if scale is not None:
                scales[name] = scale
    _check_across_scales(checker, scales, id_column, groups, keys)
    if checker.problems:
        return None, checker.problems
    spec = ScaleSpec(title=title or Path(path).stem, id_column=id_column, groups=tuple(groups),
                     group_levels=MappingProxyType(group_levels),
                     missing_texts=DEFAULT_MISSING_TEXTS if checker.top_missing_texts is None
                     else checker.top_missing_texts,
                     group_codes=MappingProxyType({c: MappingProxyType(m) for c, m in group_codes.items()}),
                     response=base or next(iter(scales.values())).response,
                     scales=MappingProxyType(scales), path=path_text, version=version, weight=weight)
    return spec, []


def _groups(checker: _Checker, node: yaml.Node,
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
                named = _level_names(checker, levels_node, f"{where}.{column}")
                if named is None:
                    continue
                codes[column] = named
                named_levels = list(named.values())
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
            column = checker.text(child, where)
            if column is None:
                continue
        if column in groups:
            checker.problem(child, where, f"group column {column!r} is listed twice")
        else:
            groups.append(column)
    return groups, levels


def _level_names(checker: _Checker, node: yaml.MappingNode, where: str) -> dict[str, str] | None:
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


def _check_across_scales(checker: _Checker, scales: dict[str, Scale], id_column: str | None,
                         groups: list[str], keys: dict) -> None:
    formats: dict[str, tuple[str, ResponseFormat]] = {}
    for scale in scales.values():
        for item in scale.items:
            if item in formats and formats[item][1] != scale.response:
                other = formats[item][0]
                checker.problems.append(Problem(
                    file=checker.path, line=scale.line, where=f"scales.{scale.name}.items",
                    message=f"item {item!r} also belongs to scale {other!r} with a different answer format"))
            formats.setdefault(item, (scale.name, scale.response))
    special = {id_column: "id_column"} if id_column else {}
    special.update({group: "groups" for group in groups})
    if "weight" in keys and isinstance(keys["weight"][1], yaml.ScalarNode):
        special[str(keys["weight"][1].value).strip()] = "weight"
    for item, (scale_name, _) in formats.items():
        if item in special:
            checker.problems.append(Problem(file=checker.path, line=scales[scale_name].line,
                                            where=f"scales.{scale_name}.items",
                                            message=f"{item!r} is also named in `{special[item]}`"))
        if item in scales and item != scale_name:
            pass  # an item may share a name with a scale; scored columns are distinct files
    for name in scales:
        if name.endswith("__answered"):
            checker.problems.append(Problem(file=checker.path, line=scales[name].line, where=f"scales.{name}",
                                            message="scale names may not end in '__answered'"))


def load_spec(path: str | Path) -> ScaleSpec:
    """Read a scale file; raise ``SpecError`` listing every problem when it is not valid."""
    spec, problems = check_spec(path)
    if problems or spec is None:
        raise SpecError(problems or [Problem(file=str(path), message="unusable scale file")])
    return spec
