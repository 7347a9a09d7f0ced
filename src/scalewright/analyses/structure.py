"""The joint item matrix of all scales, for the factor structure."""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from ..notes import Note, note

if TYPE_CHECKING:
    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.structure import StructureResult


@dataclass(frozen=True)
class JointItems:
    """Every item of the scale file once, keyed, with the scale it is matched against."""

    matrix: np.ndarray
    item_names: tuple[str, ...]
    item_scale: dict[str, str]
    scale_items: dict[str, tuple[str, ...]]
    notes: tuple[Note, ...]  # codes with values, worded by present/messages


def item_homes(spec: ScaleSpec) -> tuple[dict[str, Any], tuple[Note, ...]]:
    """Each item's home scale, the smallest scale listing it (the first of equal size: a subscale rather than
    the total), and a note for each item that the scales listing it key both ways (analysed as its home keys it)."""
    homes, notes = {}, []
    for item in spec.items:
        listing = [scale for scale in spec.scales.values() if item in scale.items]
        home = min(listing, key=lambda scale: scale.k)
        homes[item] = home
        if len({scale.is_reversed(item) for scale in listing}) > 1:
            notes.append(note("item-keyed-both-ways", item=item, scale=home.name))
    return homes, tuple(notes)


def joint_keyed_items(responses: Responses, spec: ScaleSpec) -> JointItems:
    """One keyed column per item, even when an item belongs to several scales (a total and a subscale).

    Each item is matched against the smallest scale containing it (its subscale rather than the total)
    and keyed as that scale keys it; a scale keying it otherwise is noted.
    """
    from ..scoring import keyed_items

    keyed = {name: keyed_items(responses, scale) for name, scale in spec.scales.items()}
    homes, notes = item_homes(spec)
    columns = [keyed[homes[item].name][:, homes[item].items.index(item)] for item in spec.items]
    item_scale = {item: home.name for item, home in homes.items()}
    matrix = np.column_stack(columns) if columns else np.empty((responses.n, 0))
    return JointItems(matrix=matrix, item_names=tuple(spec.items), item_scale=item_scale,
                      scale_items={name: tuple(scale.items) for name, scale in spec.scales.items()},
                      notes=notes)


def analyse_structure_of_file(spec: ScaleSpec, responses: Responses, *, ordinal: bool = False,
                              **options: Any) -> StructureResult:
    """:func:`~scalewright.stats.structure.analyse_structure` of the joint item matrix of every scale.

    The joint matrix's notes (an item keyed one way in one scale and the other way in another) come first
    among the result's notes, so the command and the report show them alike. ``options`` go to
    ``analyse_structure``. ``ordinal`` analyses the polychoric correlations of the items instead of the
    Pearson ones (over the same complete rows).
    """
    from dataclasses import replace

    from ..stats.structure import analyse_structure

    codes = responses.codes(spec.items)
    if codes is not None:
        # whole answer levels: from the summaries of the codes that the streaming and Dask routes merge (exact
        # integer cross-products, per-pattern statistics, pair tables), so every route gives the same structure
        # (the iterative factoring would carry a last-bit difference in the correlations into the loadings)
        from ..engine.plan import joint_members
        from .summarised_structure import joint_keying, structure_from_joint

        missing = options.pop("missing", "listwise")
        members = joint_members(np.asarray(codes), span=joint_keying(spec)[3],
                                cross_products="pairwise" if missing == "pairwise" else "listwise",
                                pair_tables=ordinal)
        return structure_from_joint(spec, members, missing=missing, ordinal=ordinal, **options)
    joint = joint_keyed_items(responses, spec)
    if ordinal:
        from .ordinal import joint_polychoric

        polychoric = joint_polychoric(responses, spec)
        options = {**options, "correlation": polychoric.correlation, "correlation_type": "polychoric",
                   "correlation_notes": polychoric.notes}
    result = analyse_structure(joint.matrix, item_names=joint.item_names, item_scale=joint.item_scale,
                               scale_items=joint.scale_items, **options)
    return replace(result, notes=(*joint.notes, *result.notes)) if joint.notes else result
