"""The drafted scale file as commented YAML, and the short summary of what the draft decided.

PyYAML cannot write comments, so the file is laid out here line by line; every value goes through
``yaml.safe_dump`` so that names and texts are quoted exactly when YAML needs it.
"""
from __future__ import annotations

import math
import textwrap
from pathlib import Path

import yaml

from ..drafting.results import AnswerFormat, Draft, ScaleDraft
from ..drafting.rules import CATEGORY, ID, RATING, ROW_NUMBER

DEFAULT_MIN_ANSWERED = 0.75  # a score needs three in four items answered (common practice, no source)
COMMENT_WIDTH = 100


def _value(value: object) -> str:
    """One YAML value in flow style, quoted only where YAML needs it."""
    text = yaml.safe_dump(value, default_flow_style=True, allow_unicode=True, width=10**9, sort_keys=False).strip()
    return text[: -len("...")].rstrip() if text.endswith("\n...") else text


def _number(value: float) -> int | float:
    return int(value) if float(value).is_integer() else float(value)


def _r(value: float) -> str:
    if not math.isfinite(value):
        return "n/a"
    return f"{value:+.2f}".replace("0.", ".", 1)


def _worded(note: object) -> str:
    """A draft's note or reason as a sentence: correlations as ``+.23`` (a mean of sizes without its sign),
    cut-offs to two decimals."""
    from ..notes import Note
    from .messages import describe

    if not isinstance(note, Note):
        return str(note)
    shown = {"item_rest_r": _r, "mean_abs_r": lambda v: _r(v).lstrip("+"), "threshold": lambda v: f"{v:.2f}"}
    return describe(note, {key: show(note.values[key]) for key, show in shown.items() if key in note.values})


def _alpha(value: float) -> str:
    return "n/a" if not math.isfinite(value) else f"{value:.2f}".replace("0.", ".", 1)


def _comment(text: str, indent: int = 0) -> list[str]:
    prefix = " " * indent + "# "
    flat = " ".join(str(text).split())
    return textwrap.wrap(flat, width=COMMENT_WIDTH, initial_indent=prefix, subsequent_indent=prefix + "  ") or \
        [prefix.rstrip()]


def _format_lines(fmt: AnswerFormat, indent: int, draft: Draft, items: tuple[str, ...] | None = None) -> list[str]:
    pad = " " * indent
    lines = [f"{pad}min: {fmt.min}", f"{pad}max: {fmt.max}"]
    if fmt.labels:
        lines.append(f"{pad}labels: {_value(fmt.labels_dict())}")
        lines += _comment(f"answer texts ordered as {fmt.wording} wording", indent)
    else:
        lines.append(f"{pad}labels: {{}}")
        lines += _comment("no answer texts in the data: add the questionnaire's labels if you want them in reports",
                          indent)
    lines.append(f"{pad}missing_codes: {_value([_number(c) for c in fmt.missing_codes])}")
    if fmt.missing_codes:
        where = _code_columns(draft, fmt.missing_codes, items)
        lines += _comment("'no answer' codes: values far outside the answers" + (f"; {where}" if where else ""),
                          indent)
    return lines


def _code_columns(draft: Draft, codes: tuple[float, ...], items: tuple[str, ...] | None) -> str:
    parts = []
    for code in codes:
        columns = [p.name for p in draft.columns if code in p.codes and p.role == RATING
                   and (items is None or p.name in items)]
        if columns:
            shown = ", ".join(columns[:4]) + (f" and {len(columns) - 4} more" if len(columns) > 4 else "")
            parts.append(f"{_number(code)} seen in {shown}")
        else:
            parts.append(f"{_number(code)} seen in other columns of the file")
    return "; ".join(parts)


def _scale_lines(scale: ScaleDraft, draft: Draft) -> list[str]:
    lines = [f"  {_value(scale.name)}:"]
    lines.append(f"    title: {_value(scale.name)}")
    lines += _comment(f"placeholder: named after the column stem {scale.stem!r}; give the scale its real title", 4)
    lines.append(f"    items: {_value(list(scale.items))}")
    lines.append(f"    reverse: {_value(list(scale.reverse_items))}")
    for proposal in scale.reverse:
        lines += _comment(f"{proposal.item}: item-rest r = {_r(proposal.r_as_worded)} as worded, "
                          f"{_r(proposal.r_reversed)} reversed", 4)
    if scale.reverse:
        lines += _comment(f"alpha {_alpha(scale.alpha_as_worded)} as worded, {_alpha(scale.alpha_keyed)} with "
                          f"{', '.join(scale.reverse_items)} reversed (n = {scale.n_used}); check the wording", 4)
    else:
        lines += _comment(f"no item correlates negatively with the rest: none proposed for reversing "
                          f"(alpha {_alpha(scale.alpha_keyed)}, n = {scale.n_used})", 4)
    lines.append("    score: mean")
    lines.append(f"    min_answered: {DEFAULT_MIN_ANSWERED}")
    if scale.response != draft.response:
        lines.append("    response:")
        lines += _format_lines(scale.response, 6, draft, scale.items)
    for note in scale.notes:
        lines += _comment(f"check: {_worded(note)}", 4)
    for aside in draft.set_aside:
        if aside.stem == scale.stem and _first_of_stem(draft, scale):
            lines += _comment(f"left out: {aside.column} {_worded(aside.reason)}", 4)
    return lines


def _first_of_stem(draft: Draft, scale: ScaleDraft) -> bool:
    return next(s for s in draft.scales if s.stem == scale.stem) is scale


def draft_yaml_text(draft: Draft, *, data_name: str, out_name: str = "THIS_FILE") -> str:
    """The commented scale file for a draft; it parses with ``yaml.safe_load`` into the scale-file layout."""
    lines = _comment(f"Scale file drafted by `scalewright draft` from {data_name} ({draft.n_rows} rows).")
    lines += _comment("Every entry is a guess from the data: check titles, items, reverse items, answer ranges, "
                      "labels and 'no answer' codes against the questionnaire, then run")
    lines += [f"#   scalewright lint {data_name} --scales {out_name}"]
    lines += _comment(f"Every scale is scored as the mean of its items and needs {DEFAULT_MIN_ANSWERED:.0%} of them "
                      "answered (min_answered): a common choice; an instrument's own manual comes first.")
    lines += ["version: 1",
              f"title: {_value(Path(data_name).stem + ' (draft)')}"]
    if draft.id_column:
        lines.append(f"id_column: {_value(draft.id_column)}")
        lines += _comment(f"{draft.id_column}: {draft.column(draft.id_column).reason}, none blank")
    elif draft.id_candidates:
        lines += _comment(f"id_column: not set; could be one of {', '.join(draft.id_candidates)}")
    elif any(p.role == ROW_NUMBER for p in draft.columns):
        numbered = ", ".join(p.name for p in draft.columns if p.role == ROW_NUMBER)
        lines += _comment(f"id_column: not set; {numbered} is distinct in every row but holds row numbers in file "
                          "order, not respondent ids")
    else:
        lines += _comment("id_column: not set; no column has a distinct value in every row")
    if draft.groups:
        lines.append(f"groups: {_value(list(draft.groups))}")
        lines += _comment("categories: " + ", ".join(
            f"{g} ({draft.column(g).n_distinct} {'coded ' if draft.column(g).role == RATING else 'text '}levels)"
            for g in draft.groups) + "; keep those you compare by")
    for note in draft.notes:
        lines += _comment(f"check: {_worded(note)}")
    if draft.response is not None:
        lines.append("response:")
        lines += _format_lines(draft.response, 2, draft)
    unused = [p for p in draft.columns if p.role not in (RATING, CATEGORY, ID) and p.name not in draft.groups or
              (p.role == ID and p.name != draft.id_column)]
    stems = {s.stem for s in draft.scales}
    loose = [a for a in draft.set_aside if a.stem not in stems]
    if unused or loose:
        lines += ["#", "# Columns in no scale:"]
        for profile in unused:
            role = "possible id" if profile.role == ID else profile.role
            lines += _comment(f"  {profile.name} ({role}): {profile.reason}")
        for aside in loose:
            lines += _comment(f"  {aside.column}: {_worded(aside.reason)}")
    if draft.scales:
        lines.append("scales:")
        for scale in draft.scales:
            lines += _scale_lines(scale, draft)
    else:
        lines += _comment("no scales found: list them yourself under `scales:`")
        lines.append("scales: {}")
    return "\n".join(lines) + "\n"


def draft_summary_lines(draft: Draft, *, data_name: str, out_name: str) -> list[str]:
    """A few lines for the terminal: what the draft decided and what to check."""
    lines = [f"drafted {len(draft.scales)} scale(s) from {len(draft.columns)} column(s) of {data_name}"]
    for scale in draft.scales:
        fmt = scale.response
        parts = [f"{len(scale.items)} items",
                 f"reversed {', '.join(scale.reverse_items)}" if scale.reverse else "none reversed",
                 f"answers {fmt.min}..{fmt.max}" + (f" ({fmt.wording} texts)" if fmt.wording else "")]
        if fmt.missing_codes:
            parts.append("no answer " + ", ".join(str(_number(c)) for c in fmt.missing_codes))
        lines.append(f"  {scale.name}: " + "; ".join(parts))
    lines.append(f"  id column: {draft.id_column or 'none chosen'}; groups: {', '.join(draft.groups) or 'none'}")
    if draft.set_aside:
        lines.append("  set aside: " + ", ".join(a.column for a in draft.set_aside))
    checks = sum(len(s.notes) for s in draft.scales) + len(draft.notes)
    lines.append(f"check: titles, reverse items against the wording, answer ranges and labels"
                 f"{f', and the {checks} note(s) marked check:' if checks else ''} in {out_name}; "
                 f"then run: scalewright lint {data_name} --scales {out_name}")
    return lines
