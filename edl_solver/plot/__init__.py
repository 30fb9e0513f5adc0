"""Figures (matplotlib, imported only when a figure is asked for)."""
