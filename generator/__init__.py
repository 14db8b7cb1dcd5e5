"""Metric Almanac: load, verify and publish a catalog of spacetime metrics."""

__version__ = "0.1.0"
