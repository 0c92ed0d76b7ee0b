"""geomload: from a CAD wing to preliminary spanwise structural loads.

CAUTION: every load geomload produces is a preliminary estimate. It is not a substitute for
certified structural analysis; the applicable airworthiness rules and licensed or authorised
engineers decide.
"""

__version__ = "0.1.0"

CAUTION = (
    "CAUTION: preliminary estimates only - not a substitute for certified structural analysis. "
    "The certification basis, the applicable airworthiness rules, the authority and "
    "licensed/authorised engineers decide."
)
