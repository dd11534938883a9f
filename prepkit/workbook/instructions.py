"""Fixed texts of the planning workbook: the instructions sheet and the contact-matrix notes."""

from __future__ import annotations

from prepkit.workbook.sheets import BAND_HEADER, MIXING, POPULATION

#: Guidance of the "Source or note" cells (free text; prepkit does not read it).
NOTE_HELP = (
    "Where the figure comes from (a report, a data set, a person) or why it was chosen. "
    "Not used in the calculation."
)

#: Title row of every contact-matrix sheet.
MATRIX_TITLE = (
    "Rows: the band of the person making the contacts. Columns: the band of the people "
    "they meet. Each cell: mean contacts per person per day."
)
#: How to label a contact-matrix sheet.
MATRIX_NOTE = (
    f"Copy the band labels from the {POPULATION} sheet into the row that starts with "
    f"'{BAND_HEADER}' and into the column below it, in any order. Leave all four contact "
    f"sheets blank to use the simple contacts on the {MIXING} sheet; fill one and all four "
    "must be complete."
)

#: Text of the instructions sheet (the sheet list is built from SHEET_PURPOSE).
INSTRUCTIONS_TITLE = "prepkit planning workbook"
INSTRUCTIONS_PURPOSE = (
    "This workbook holds the inputs of one outbreak plan: the population, how people "
    "meet, how the disease spreads and how severe it is, the hospital beds, the measures "
    "being considered and the scenarios to compare. prepkit reads it and turns it into "
    "planning scenarios and a printed briefing pack."
)
INSTRUCTIONS_HOW_HEADING = "How to fill it in"
INSTRUCTIONS_HOW: tuple[str, ...] = (
    "Type only in the shaded cells with a dotted border; every other cell is locked. "
    "The sheets are protected without a password: use Review > Unprotect Sheet if you "
    "need to change the layout.",
    "Each input has its unit beside it and guidance next to it; selecting a cell also "
    "shows its guidance. Leave a cell blank to use the default named in the guidance.",
    "Shares may be typed as 25% or as 0.25. A bare number above 1 is not a share.",
    "Dates may be Excel dates or text like 2027-01-15.",
    "Where Low, Central and High columns appear, Central is the best estimate; a blank "
    "Low or High means the same as Central.",
    "You may insert rows, move item rows, put the rows of a table in any order, reorder "
    "table columns and add your own sheets. Keep the labels and column headers as they "
    "are: prepkit finds every input by them.",
    "Use the Source or note column to say where each figure comes from.",
    "Run 'prepkit check' on the file to list every problem at once, with its sheet and "
    "cell.",
)
INSTRUCTIONS_SHEETS_HEADING = "The sheets"
INSTRUCTIONS_CAUTION = (
    "Caution: the results are a planning aid, not a forecast. They show what could happen "
    "under the stated assumptions. Decisions rest with the local health authority."
)
