"""Adapters that put bypassopt's engine into aircraft-design frameworks built on OpenMDAO."""
