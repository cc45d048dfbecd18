"""Figures and reports built from result datasets."""
