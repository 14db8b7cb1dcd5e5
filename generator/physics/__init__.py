"""Stage 3, physics: matter content, energy conditions, Petrov type, symmetries, classification and
the verification of claims.
"""
