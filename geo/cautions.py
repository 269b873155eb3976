"""The cautions every output carries (README, help screen, reports, GeoJSON)."""

CAUTIONS = (
    "lodeline computes directions and figures; it does not locate boundaries. "
    "In a boundary retracement the original monuments and the evidence of the original "
    "survey control over recorded bearings and distances, and local statutes, case law and "
    "licensed professional practice decide where a line is. A computed line is not a legal "
    "boundary. Field models describe the main field only: they leave out local crustal "
    "anomalies and magnetic disturbances, which can reach several degrees, and historical "
    "declinations carry the uncertainty of the model and of the original compass work."
)

SHORT_CAUTION = (
    "Not a legal boundary: original monuments and evidence control; local law and licensed "
    "practice decide. Field models omit local anomalies (can be several degrees)."
)
