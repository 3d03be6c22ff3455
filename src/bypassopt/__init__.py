"""bypassopt: analytic-derivative OpenMDAO components for installed turbofan cycle selection."""

__version__ = "0.2.0"

CAUTION = (
    "Preliminary-design estimate only. Ground-clearance minima, temperature limits and all other "
    "certification values must come from the applicable airworthiness rules and the engine "
    "manufacturer's data; this tool does not replace them."
)
