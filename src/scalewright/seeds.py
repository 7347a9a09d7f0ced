"""The one default seed of every random step, in every command and in the report.

Parallel analysis (random correlation matrices), the dip test's jitter of tied scores and the bootstrap of
alpha all draw random numbers. With the same seed they draw the same numbers, so a command and the report
give the same parallel-analysis percentiles and the same dip p on the same data. ``--seed`` changes it for
one run; the seed used is recorded in every JSON output (``options.seed``).
"""
from __future__ import annotations

#: the default seed of every command (``structure``, ``shape``, ``reliability --bootstrap``, ``report``, ``demo``)
DEFAULT_SEED = 2026
