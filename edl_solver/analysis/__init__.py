"""Analyses built on many solves: thin-layer validity maps and their root-found boundaries."""
