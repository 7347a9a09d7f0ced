"""Tables and plain-language explanations of a careless-responding screen (no statistics computed here)."""
from __future__ import annotations

import csv
import io
import math
from typing import Any

from ..files import neutralise_formula
from .numbers import format_value
from .table import Table

CAUTION = ("A flag marks a record to look at, not a verdict on a person: read the answers before setting anyone "
           "aside, and report how many were set aside and why.")

#: what each flag code means, in words (codes are defined in scalewright.stats.screen_rules)
FLAG_MEANINGS = {
    "long-run": "the same answer many times in a row",
    "far-from-sample": "an answer pattern far from the sample's (Mahalanobis distance)",
    "fast": "finished much faster than the median time",
    "duplicate-answers": "answers identical to another respondent's",
    "duplicate-id": "an id that appears more than once",
    "somewhat-far": "an answer pattern somewhat far from the sample's",
    "uneven-halves": "odd- and even-numbered items of the scales disagree",
    "against-sample": "answer profile does not follow the sample's item means",
    "many-missing": "many items unanswered",
}

#: shown instead of a count for a check that did not run
NOT_CHECKED = "not checked"

RESPONDENT_COLUMNS = ("id", "flagged", "flags", "longstring", "irv", "mahalanobis_d2", "mahalanobis_df",
                      "mahalanobis_pvalue", "even_odd", "person_total_r", "missing_pct", "duration", "explanation")


def _num(value: Any, kind: str = "num", decimals: int = 2) -> str:
    return format_value(value, kind, decimals)


def _is_number(value: Any) -> bool:
    return value is not None and not (isinstance(value, float) and math.isnan(value))


def screen_notes(document: dict[str, Any]) -> list[str]:
    """The screen's notes as sentences (``document`` is ``ScreenResult.to_dict()``, notes as codes or text)."""
    from ..notes import Note
    from .messages import describe

    out = []
    for item in document.get("notes", ()):
        if isinstance(item, dict) and item.get("code") == "not-computable":
            continue  # the JSON's reason for a null index; the respondent table shows a dash
        if isinstance(item, dict) and "code" in item:
            values = {k: tuple(v) if isinstance(v, list) else v for k, v in item.items() if k != "code"}
            item = Note(code=item["code"], values=values)
        out.append(describe(item))
    return out


def duplicate_notes(document: dict[str, Any]) -> list[str]:
    """One account of the identical answer rows: how many are listed, how many flagged, and why not the rest."""
    from ..notes import note
    from .messages import describe

    duplicates = document["duplicates"]
    groups, status = duplicates["rows"], duplicates.get("row_status") or []
    if not groups:
        return []
    flagged = sum(len(g) for g, s in zip(groups, status, strict=True) if s == "flagged")
    out = [describe(note("duplicates-account", groups=len(groups), respondents=sum(len(g) for g in groups),
                         flagged=flagged))]
    for reason, code in (("long-run", "duplicates-long-run"), ("few-answers", "duplicates-few-answers")):
        chosen = [g for g, s in zip(groups, status, strict=True) if s == reason]
        if chosen:
            out.append(describe(note(code, groups=len(chosen), respondents=sum(len(g) for g in chosen),
                                     min_items=document["thresholds"]["duplicate_min_items"])))
    return out


#: the Duplicate records table's words for ``ScreenResult.duplicate_status``
DUPLICATE_STATUS = {"flagged": "yes", "long-run": "no: counted under long-run",
                    "few-answers": "no: too few answers to tell from chance"}


def explain_flags(record: dict[str, Any], *, thresholds: dict[str, Any], n_items: int, long_run_items: int,
                  median_duration: float | None = None, duration_unit: str | None = None) -> str:
    """One sentence per flag of one respondent (``record`` is an entry of ``ScreenResult.respondent_records``)."""
    parts: list[str] = []
    for code in record["flags"]:
        if code == "long-run":
            parts.append(f"gave the same answer to {record['longstring']} items in a row "
                         f"(limit {long_run_items} of {n_items})")
        elif code in ("far-from-sample", "somewhat-far"):
            limit = thresholds["mahalanobis_pvalue" if code == "far-from-sample" else "mahalanobis_pvalue_weak"]
            parts.append(f"answer pattern {'far' if code == 'far-from-sample' else 'somewhat far'} from the "
                         f"sample's (D² = {_num(record['mahalanobis_d2'], decimals=1)} on "
                         f"{record['mahalanobis_df']} items, p {_p_phrase(record['mahalanobis_pvalue'])}; "
                         f"limit p < {_num(limit, 'p')})")
        elif code == "uneven-halves":
            parts.append(f"odd and even items disagree (even-odd consistency "
                         f"{_num(record['even_odd'], 'bounded')}, limit {_num(thresholds['even_odd_min'], 'bounded')})")
        elif code == "against-sample":
            parts.append(f"answers do not follow the sample's item means (person-total r "
                         f"{_num(record['person_total_r'], 'bounded')}, limit "
                         f"{_num(thresholds['person_total_min'], 'bounded')})")
        elif code == "fast":
            unit = f" {duration_unit}" if duration_unit else ""
            median = (f" against a median of {_num(median_duration, decimals=0)}{unit}"
                      if _is_number(median_duration) else "")
            parts.append(f"took {_num(record.get('duration'), decimals=0)}{unit}{median} "
                         f"(limit {_num(thresholds['speed_pct'] / 100, 'bounded')} of the median)")
        elif code == "many-missing":
            parts.append(f"left {_num(record['missing_pct'], 'pct')}% of the items unanswered "
                         f"(listed only; limit {_num(thresholds['missing_pct_max'], 'pct')}%)")
        elif code == "duplicate-answers":
            parts.append("answers identical to another respondent's, item for item")
        elif code == "duplicate-id":
            parts.append("the id appears more than once in the data")
        else:
            parts.append(FLAG_MEANINGS.get(code, code))
    if not parts:
        return "no flag"
    text = "; ".join(parts)
    if not record["flagged"]:
        text += " (weak signal only; not flagged)"
    return text[0].upper() + text[1:]


def _p_phrase(p: Any) -> str:
    text = _num(p, "p")
    return text if text.startswith("<") else f"= {text}"


def respondent_rows(document: dict[str, Any], *, flagged_only: bool = False) -> list[dict[str, Any]]:
    """Per-respondent records with their explanation, from ``ScreenResult.to_dict()``."""
    summary = document["summary"]
    rows = []
    for record in document["respondents"]:
        if flagged_only and not record["flagged"]:
            continue
        explanation = explain_flags(record, thresholds=document["thresholds"], n_items=summary["n_items"],
                                    long_run_items=summary["long_run_items"],
                                    median_duration=summary.get("median_duration"),
                                    duration_unit=summary.get("duration_unit"))
        rows.append({**record, "flags": ";".join(record["flags"]), "explanation": explanation})
    return rows


def respondents_csv(document: dict[str, Any], *, flagged_only: bool = False) -> str:
    """The per-respondent table as CSV with the id first, as ``--exclude`` reads it. Values are not rounded."""
    has_duration = any("duration" in r for r in document["respondents"])
    return (respondents_csv_header(has_duration=has_duration)
            + respondents_csv_rows(document, flagged_only=flagged_only, has_duration=has_duration))


def respondents_csv_header(*, has_duration: bool) -> str:
    """The header line of :func:`respondents_csv`."""
    buffer = io.StringIO()
    csv.writer(buffer, lineterminator="\n").writerow(_respondent_columns(has_duration))
    return buffer.getvalue()


def _respondent_columns(has_duration: bool) -> list[str]:
    return [c for c in RESPONDENT_COLUMNS if c != "duration" or has_duration]


def respondents_csv_rows(document: dict[str, Any], *, flagged_only: bool = False, has_duration: bool) -> str:
    """The rows of :func:`respondents_csv` of ``document["respondents"]`` (which may be one block of them)."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    columns = _respondent_columns(has_duration)
    for row in respondent_rows(document, flagged_only=flagged_only):
        values = []
        for column in columns:
            value = row.get(column)
            if isinstance(value, bool):
                value = "yes" if value else "no"
            values.append("" if value is None else neutralise_formula(value))
        writer.writerow(values)
    return buffer.getvalue()


def screen_tables(document: dict[str, Any], *, flagged_only: bool = True, max_rows: int | None = None) -> list[Table]:
    """Tables of a screen: flag counts, flagged respondents with reasons, alpha without them, duplicates.

    ``document`` is ``ScreenResult.to_dict()``. ``max_rows`` limits the respondent table (a note says so).
    """
    summary = document["summary"]
    codes = document["flag_codes"]
    kind_of = {**{c: "strong" for c in codes["strong"]}, **{c: "weak" for c in codes["weak"]},
               **{c: "listed only" for c in codes["listed_only"]}}
    n = summary["n"]
    # a check that did not run says so; its count is not a zero
    count_rows = tuple((code, FLAG_MEANINGS.get(code, code), kind_of.get(code, ""),
                        NOT_CHECKED if count is None else count, 100 * count / n if n and count is not None else None)
                       for code, count in summary["counts"].items())
    count_rows += (("(flagged)", "respondents flagged by the combined rule", "", summary["n_flagged"],
                    100 * summary["n_flagged"] / n if n else None),)
    tables = [Table(
        title="Screening flags", columns=("flag", "meaning", "kind", "respondents", "%"), rows=count_rows,
        kinds={"flag": "text", "meaning": "text", "kind": "text", "respondents": "int", "%": "pct"},
        notes=("Strong flags mark a respondent alone; weak ones only as somewhat-far together with "
               "uneven-halves or against-sample.", CAUTION), key="flags")]

    rows = respondent_rows(document, flagged_only=flagged_only)
    notes: list[str] = []
    # a screen of a file read in blocks holds only the first flagged records: the count comes from the summary
    total = summary["n_flagged"] if flagged_only else len(rows)
    if max_rows is not None and total > max_rows:
        notes.append(f"showing {max_rows} of {total} respondents; --out FILE.csv writes them all")
        rows = rows[:max_rows]
    tables.append(Table(
        title="Flagged respondents" if flagged_only else "Respondents",
        columns=("id", "flags", "longest run", "IRV", "D²", "p", "even-odd", "person-total r", "missing %", "why"),
        rows=tuple((r["id"], r["flags"], r["longstring"], r["irv"], r["mahalanobis_d2"], r["mahalanobis_pvalue"],
                    r["even_odd"], r["person_total_r"], r["missing_pct"],
                    r["explanation"]) for r in rows),
        kinds={"id": "text", "flags": "text", "longest run": "int", "p": "p", "even-odd": "bounded",
               "person-total r": "bounded", "missing %": "pct", "why": "text"},
        notes=tuple(notes) or (("no respondent flagged",) if not rows else ()), key="respondents"))

    alpha = summary.get("alpha_change") or {}
    if alpha:
        from ..notes import note
        from .messages import describe

        tables.append(Table(
            title="Cronbach's alpha without the flagged respondents",
            columns=("scale", "alpha", "n", "alpha without flagged", "n without", "change"),
            rows=tuple((name, a["alpha_all"], a["n_all"], a["alpha_without_flagged"], a["n_without_flagged"],
                        a["change"]) for name, a in alpha.items()),
            kinds={"scale": "text", "alpha": "bounded", "n": "int", "alpha without flagged": "bounded",
                   "n without": "int", "change": "num"},
            notes=("complete answers only (listwise) in both columns",
                   *((describe(note("screen-alpha-weighted")),)
                     if any(a.get("weighted") for a in alpha.values()) else ())),
            key="alpha_change"))

    duplicates = document["duplicates"]
    status = duplicates.get("row_status") or [None] * len(duplicates["rows"])
    if duplicates["rows"] or duplicates["ids"]:
        dup_rows = tuple(("identical answers", ", ".join(group), DUPLICATE_STATUS.get(s, "")) for group, s
                         in zip(duplicates["rows"], status, strict=True))
        dup_rows += tuple(("repeated id", i, "yes (duplicate-id)") for i in duplicates["ids"])
        tables.append(Table(title="Duplicate records", columns=("kind", "respondents", "flagged"), rows=dup_rows,
                            kinds={"kind": "text", "respondents": "text", "flagged": "text"}, key="duplicates"))
    from .messages import weak_index_sentence

    weak = tuple(weak_index_sentence(use) for use in document.get("weak_indices", {}).values())
    extra = (*weak, *screen_notes(document), *duplicate_notes(document))
    if extra:
        tables[0] = Table(title=tables[0].title, columns=tables[0].columns, rows=tables[0].rows,
                          kinds=tables[0].kinds, notes=tables[0].notes + tuple(extra), key=tables[0].key)
    return tables
