"""The sign prover lives in ``generator.geometry.positivity`` (the equality decision uses it
for its case splits, and geometry sits below physics); this name is kept for its callers."""

from __future__ import annotations

from generator.geometry.positivity import (  # noqa: F401
    domain_substitution,
    proved_sign,
    proves_sign,
    square_lower_bound,
    substitute_domain,
)
