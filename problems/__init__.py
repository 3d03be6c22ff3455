"""Ready-made OpenMDAO problems built from the bypassopt components."""
