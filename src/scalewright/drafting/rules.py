"""The column roles a draft assigns and the rules of thumb that decide them."""
from __future__ import annotations

# Column roles.
RATING = "rating"
ID = "id"
CATEGORY = "category"
FREE_TEXT = "free text"
DATE = "date"
NUMBER = "number"
EMPTY = "empty"
CONSTANT = "constant"
UNCLEAR = "unclear"
ROW_NUMBER = "row number"

MAX_RATING_POINTS = 11  # 0-10 is the widest common rating format (common practice, no source)
MAX_CATEGORY_LEVELS = 12  # more text levels than this reads as free text (common practice, no source)
MIN_ROWS_FOR_CORRELATIONS = 10
#: a stand-alone column of whole-number codes with this many levels reads as a coded category (gender 1/2,
#: education 1-5), proposed as a group; common practice, no source
CODED_GROUP_LEVELS = (2, 7)
# Items of one scale usually correlate at least about .15-.20 (Clark & Watson 1995, Psychol. Assess. 7:309-319,
# recalled from memory, suggest a mean inter-item r of .15-.50); below this an item is not grouped with the rest.
MIN_ABS_R = 0.20
ODD_TEXT_SHARE = 0.05  # rating columns may hold a few unknown texts, reported; more makes the column unclear
