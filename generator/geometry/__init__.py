"""Stage 2, geometry: exact rational-function algebra, curvature, sample points and equality
decisions.
"""
