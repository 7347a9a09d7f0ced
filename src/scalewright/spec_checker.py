"""The parts of a scale file: answer formats, their "no answer" texts, and each scale's keys."""
from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

import yaml

from .errors import did_you_mean, quoted
from .limits import MAX_ANSWER_SPAN, MAX_ANSWER_VALUE, MAX_MISSING_CODE
from .spec_model import (
    DEFAULT_MISSING_TEXTS,
    PLAIN_DECIMAL,
    RESPONSE_KEYS,
    SCALE_KEYS,
    SCALE_NAME,
    SCORE_METHODS,
    ResponseFormat,
    Scale,
    normalise_answer_text,
)
from .yaml_nodes import NodeReader


class SpecChecker(NodeReader):
    """Reads the parts of a scale file from its nodes, collecting problems with line numbers and key paths."""

    def __init__(self, path: str) -> None:
        super().__init__(path)
        self.top_response_given = False  # an invalid top-level format is reported once, not per scale
        self.top_missing_texts: tuple[str, ...] | None = None  # the top-level ``missing_texts``, if given
        self.top_missing_texts_node: yaml.Node | None = None
        # each format's "no answer" texts before its labels removed any default one, and whether the scale
        # file listed them: a scale's own format inherits these
        self._texts_origin: dict[int, tuple[tuple[str, ...], bool]] = {}
        self._last_texts_origin: tuple[tuple[str, ...], bool] = (DEFAULT_MISSING_TEXTS, False)

    # -- parts of the file ----------------------------------------------------------------------------
    def response(self, node: yaml.Node | None, where: str, base: ResponseFormat | None) -> ResponseFormat | None:
        keys = self.mapping(node, where, RESPONSE_KEYS)
        if keys is None:
            if base is None:
                self.problem(node, where, "the answer format needs at least `min` and `max`")
            return base
        low = self.whole_number(keys["min"][1], f"{where}.min") if "min" in keys else \
            (base.min if base else None)
        high = self.whole_number(keys["max"][1], f"{where}.max") if "max" in keys else \
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
                code = self.whole_number(code_node, here)
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
                    missing_code = self.number(child, f"{where}.missing_codes[{index}]")
                    if missing_code is not None and abs(missing_code) > MAX_MISSING_CODE:
                        self.problem(child, f"{where}.missing_codes[{index}]",
                                     f"missing code {missing_code:g} is larger than {MAX_MISSING_CODE:.0e} "
                                     "(see docs/limits.md)")
                    elif missing_code is not None:
                        missing.append(missing_code)
            elif not (isinstance(codes_node, yaml.ScalarNode) and self.scalar(codes_node) is None):
                self.problem(codes_node, f"{where}.missing_codes", "expected a list of codes, e.g. [9, 99]")
        elif base is not None:
            missing = list(base.missing_codes)
        for missing_code in missing:
            if low <= missing_code <= high:
                at = keys["missing_codes"][1] if "missing_codes" in keys else node
                self.problem(at, f"{where}.missing_codes",
                             f"missing code {missing_code:g} lies inside the answer range {low}..{high}; "
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

    def missing_texts(self, node: yaml.Node | None, keys: dict, where: str, base: ResponseFormat | None,
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
