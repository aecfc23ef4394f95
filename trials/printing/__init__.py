"""Printed documents as PDF bytes: ballots, the serving sheet and cup labels.

The printing layer takes plain records (:mod:`trials.model`) and the method registry;
it never touches the database and never imports streamlit. Every function returns a
:class:`PrintResult` (``data`` = the PDF's bytes, ``pages``); the caller writes it.
"""

from trials.printing.ballots import ballots_pdf
from trials.printing.labels import A4_3X7, A4_3X8, LETTER_3X10, PRESETS, LabelLayout, labels_pdf
from trials.printing.layout import PrintResult
from trials.printing.run_sheet import run_sheet_pdf
from trials.printing.sheet import serving_sheet_pdf
from trials.printing.tables import critical_table_pdf

__all__ = [
    "A4_3X7",
    "A4_3X8",
    "LETTER_3X10",
    "PRESETS",
    "LabelLayout",
    "PrintResult",
    "ballots_pdf",
    "critical_table_pdf",
    "labels_pdf",
    "run_sheet_pdf",
    "serving_sheet_pdf",
]
