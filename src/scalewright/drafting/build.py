"""Drafting a first scale file from a data file's columns: :func:`draft_scales`, the one entry point."""
from __future__ import annotations

import math
import re
from collections import Counter
from dataclasses import replace

import numpy as np
import pandas as pd

from ..errors import DataError
from ..notes import Note, note
from ..spec_model import SCALE_NAME
from .answer_format import answer_values, infer_answer_format
from .columns import ParsedColumn, looks_like_id_name, profile_column
from .keying import correlation_clusters, correlation_threshold, scale_from_cluster
from .results import ColumnProfile, Draft, ScaleDraft, SetAside
from .rules import (
    CATEGORY,
    CODED_GROUP_LEVELS,
    ID,
    MIN_ROWS_FOR_CORRELATIONS,
    RATING,
    ROW_NUMBER,
)


def _scale_name(stem: str, taken: set[str]) -> str:
    name = re.sub(r"[^A-Za-z0-9_.-]+", "_", stem).strip("_") or "scale"
    if not SCALE_NAME.match(name):
        name = f"scale_{name}"
    name = name.removesuffix("__answered")
    candidate, number = name, 2
    while candidate in taken:
        candidate, number = f"{name}_{number}", number + 1
    taken.add(candidate)
    return candidate


def _stem_groups(profiles: list[ColumnProfile]) -> dict[str, list[ColumnProfile]]:
    groups: dict[str, list[ColumnProfile]] = {}
    for profile in profiles:
        if profile.role == RATING and profile.stem:
            groups.setdefault(profile.stem, []).append(profile)
    return groups


def _choose_id(profiles: list[ColumnProfile]) -> tuple[str | None, tuple[str, ...], list[str]]:
    candidates = [p for p in profiles if p.role == ID]
    names = tuple(p.name for p in candidates)
    if not candidates:
        return None, names, []
    named = [p for p in candidates if looks_like_id_name(p.name)]
    if len(candidates) == 1:
        return candidates[0].name, names, []
    if len(named) == 1:
        return named[0].name, names, [f"several columns have all-distinct values ({', '.join(names)}); "
                                      f"{named[0].name} was taken as the id by its name"]
    return None, names, [f"several columns could be the respondent id ({', '.join(names)}); none was chosen: "
                         "set id_column yourself"]


def _share_missing_codes(scales: list[ScaleDraft]) -> list[ScaleDraft]:
    """A "no answer" code found in one scale's items is taken as the file's convention: every scale gets
    each such code that lies outside its own answer range."""
    found = sorted({code for s in scales for code in s.response.missing_codes})
    shared = []
    for scale in scales:
        fmt = scale.response
        codes = tuple(c for c in found if not fmt.min <= c <= fmt.max)
        shared.append(replace(scale, response=replace(fmt, missing_codes=codes)))
    return shared


def draft_scales(frame: pd.DataFrame) -> Draft:
    """Draft scales and the other parts of a scale file from a raw data table.

    Parameters
    ----------
    frame : pandas.DataFrame
        The data file as read, one row per respondent, values as written (numbers and/or texts).

    Returns
    -------
    Draft
        Column roles, candidate scales with proposed reverse items and answer formats, the id and group
        columns proposed, rating-like columns set aside (with why) and notes of what to check.
    """
    from ..stats.item_covariance import correlation_from_cov, item_covariance

    if not isinstance(frame, pd.DataFrame):
        raise DataError("draft_scales needs a table (pandas DataFrame) of the data file")
    if frame.shape[0] == 0 or frame.shape[1] == 0:
        raise DataError("the data file has no rows or no columns to draft from")
    profiles: list[ColumnProfile] = []
    parsed: dict[str, ParsedColumn] = {}
    for name in frame.columns:
        profile, column = profile_column(str(name), frame[name])
        profiles.append(profile)
        parsed[profile.name] = column
    notes: list[str] = []
    set_aside: list[SetAside] = []
    scales: list[ScaleDraft] = []
    taken: set[str] = set()
    groups = _stem_groups(profiles)
    grouped = {p.name for members in groups.values() if len(members) >= 2 for p in members}
    coded_groups: list[str] = []
    for profile in profiles:
        if profile.role == RATING and profile.name not in grouped:
            levels = parsed[profile.name].numbers.dropna().nunique()
            whole = not profile.texts and CODED_GROUP_LEVELS[0] <= levels <= CODED_GROUP_LEVELS[1]
            if whole:
                coded_groups.append(profile.name)
                notes.append(f"{profile.name}: {levels} whole-number codes and no name stem shared with answer "
                             "columns: proposed as a group; name its codes in the scale file, e.g. "
                             f"{{{profile.name}: {{1: ..., 2: ...}}}}, or drop it if it is a single item")
                continue
            why = "shares no name stem with another answer column" if profile.stem is None or \
                len(groups.get(profile.stem, [])) < 2 else "stands alone"
            set_aside.append(SetAside(column=profile.name, stem=profile.stem,
                                      reason=f"looks like answers ({profile.reason}) but {why}: a single item, "
                                             "or a coded category? not put in a scale"))
    for stem, members in groups.items():
        if len(members) < 2:
            continue
        fmt, fmt_notes = infer_answer_format(members)
        names = [m.name for m in members]
        matrix = np.column_stack([answer_values(parsed[m.name], fmt) for m in members])
        stats = item_covariance(matrix, pairwise=True)
        if stats.n_used < MIN_ROWS_FOR_CORRELATIONS:
            clusters = [list(range(len(members)))]
            fmt_notes.append(f"only {stats.n_used} rows answer every pair of {stem} items: grouped by name "
                             "alone, correlations not checked")
        else:
            corr = correlation_from_cov(stats.cov)
            threshold = correlation_threshold(stats.n_used)
            clusters = correlation_clusters(np.abs(corr), threshold=threshold)
        kept = [c for c in clusters if len(c) >= 2]
        weak_notes: dict[int, list[str | Note]] = {}
        weak_items: dict[int, list[str]] = {}
        if stats.n_used >= MIN_ROWS_FOR_CORRELATIONS:
            for cluster in clusters:
                if len(cluster) != 1:
                    continue
                j = cluster[0]
                if not kept:
                    others = [i for i in range(len(members)) if i != j]
                    mean_r = float(np.nanmean(np.abs(corr[j, others]))) if others else math.nan
                    set_aside.append(SetAside(
                        column=names[j], stem=stem,
                        reason=note("draft-uncorrelated-column", stem=stem, mean_abs_r=mean_r, threshold=threshold)))
                    continue
                # kept in its likeliest scale (highest mean |r|) with a note to check it, rather than dropped
                mean_rs = [float(np.nanmean(np.abs(corr[j, c]))) for c in kept]
                home = int(np.argmax(mean_rs))
                kept[home] = sorted([*kept[home], j])
                weak_items.setdefault(home, []).append(names[j])
                weak_notes.setdefault(home, []).append(note("draft-weakly-related-item", item=names[j], stem=stem,
                                                             mean_abs_r=mean_rs[home], threshold=threshold))
        for number, cluster in enumerate(kept):
            name = _scale_name(stem, taken)
            cluster_notes = list(fmt_notes) + weak_notes.get(number, [])
            if len(kept) > 1:
                cluster_notes.append(f"the {stem} items fall into {len(kept)} groups by their correlations; "
                                     f"this is group {number + 1}")
            scales.append(scale_from_cluster(name, stem, [names[i] for i in cluster], matrix[:, cluster],
                                              fmt, cluster_notes, weak=frozenset(weak_items.get(number, ()))))
    scales = _share_missing_codes(scales)
    id_column, id_candidates, id_notes = _choose_id(profiles)
    notes.extend(id_notes)
    categories = tuple(p.name for p in profiles if p.role == CATEGORY or p.name in coded_groups)
    row_numbers = [p.name for p in profiles if p.role == ROW_NUMBER]
    if row_numbers and id_column is None:
        notes.append(f"{', '.join(row_numbers)} holds row numbers in file order (distinct in every row, but not a "
                     "respondent id): set id_column to a real id if the file has one")
    response = None
    if scales:
        counts = Counter(s.response for s in scales)
        response = max(counts, key=lambda f: (counts[f], -[s.response for s in scales].index(f)))
    if not scales:
        notes.append("no group of answer columns sharing a name stem was found: no scale drafted")
    return Draft(n_rows=int(frame.shape[0]), columns=tuple(profiles), scales=tuple(scales), response=response,
                 id_column=id_column, id_candidates=id_candidates, groups=categories,
                 set_aside=tuple(set_aside), notes=tuple(notes))
