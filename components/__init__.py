"""OpenMDAO components of bypassopt, grouped by discipline."""
