"""Sentences of drafting a scale file."""
from __future__ import annotations

DRAFTING: dict[str, str] = {
    "draft-weak-item": "{item}: item-rest r = {item_rest_r} with the proposed keying, weak: check its wording",
    "draft-uncorrelated-column": "does not correlate with the other {stem} items (mean |r| = {mean_abs_r}, below "
                                 "{threshold}): left out of every scale",
    "draft-weakly-related-item": "{item} correlates weakly with the other {stem} items (mean |r| = {mean_abs_r} "
                                 "with this group, below {threshold}); kept here as its likeliest scale, as "
                                 "worded: check its wording and direction, or remove it",
}
