"""Rotating tables, planar frames and other bodies."""
