"""Fan sizing, nacelle geometry and drag, engine mass, ground clearance and installed performance."""
