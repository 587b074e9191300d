"""poroplane: coupled consolidation (Biot) finite elements beside the hand method.

Results from this package inform geotechnical design. They need review by a qualified
engineer; local codes and licensed practice govern.
"""

__version__ = "0.1.0"

CAUTION = (
    "Caution: these results need review by a qualified engineer; "
    "local codes and licensed practice govern."
)
