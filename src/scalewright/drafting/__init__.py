"""Drafting a first scale file from a data file's columns (:func:`.build.draft_scales`).

Pure analysis of a raw table (as :func:`scalewright.data.read_table` gives it): which columns hold rating
answers and which hold ids, categories, free text, dates or other numbers; which rating columns form
candidate scales (shared name stems, confirmed or split by their correlations); the answer range, the
order of answer texts and the "no answer" codes; and which items look reverse-worded. Every decision
carries its evidence so the written draft can show it to the person who has to check it.

The package, one job per module: :mod:`.rules` (column roles and rules of thumb), :mod:`.wordings` (known answer
wordings), :mod:`.results` (what a draft holds), :mod:`.columns` (reading one column), :mod:`.answer_format`
(range, answer texts and "no answer" codes of a group of columns), :mod:`.keying` (grouping by correlations,
guessing reverse-worded items) and :mod:`.build` (the draft of the whole file). The draft is written as YAML by
:mod:`scalewright.present.draft_yaml`.
"""
