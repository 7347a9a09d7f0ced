"""Analyses of a whole scale file: the step between scoring and the statistics.

Each function takes the validated ``ScaleSpec`` and the ``Responses``, keys the items and calls the pure
statistics of ``scalewright.stats``. The commands and the report both call these, so they give the same
numbers. Nothing here prints, renders or reads files.
"""
