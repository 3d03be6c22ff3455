"""Design-point elements of a separate-exhaust two-spool turbofan."""
