"""Presentation: turns result objects into tables, text, JSON, CSV, Markdown, HTML and figures.

Nothing here computes a statistic; numbers are rounded only here.
"""
