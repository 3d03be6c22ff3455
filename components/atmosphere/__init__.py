"""ISO 2533 standard atmosphere and flight-condition components."""
