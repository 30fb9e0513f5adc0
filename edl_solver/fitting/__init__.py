"""Fitting case inputs to measurements (edl.fit): data, forward model, least squares, uncertainty, thin-layer fit."""
