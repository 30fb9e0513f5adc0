"""Fitting case inputs to measurements."""
