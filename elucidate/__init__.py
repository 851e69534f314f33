"""elucidate: candidate constitutions from a molecular formula and NMR peak lists.

Results are hypotheses ranked by consistency with the data, not identifications.
"""

__version__ = "0.1.0"

CAUTION = (
    "Results are hypotheses ranked by consistency with the data, not identifications. "
    "Confirm with an authentic reference standard, 2D NMR and MS before any safety, "
    "regulatory, forensic or clinical decision; handle unknown substances under local "
    "regulations and licensed practice."
)
