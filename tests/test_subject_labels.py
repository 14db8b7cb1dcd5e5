"""Every checked value is named in the reader's words on the entry page, never by its YAML key.

A key such as ``claims.surface_gravity`` on the page is an internal name leaking to readers
(the reader's-pages review found such leaks); each claim key the schema accepts must have a
label, so a new key cannot slip through unnamed. Names of the trade (surface gravity, Komar
mass, innermost stable circular orbit) are common practice.
"""

from __future__ import annotations

import pytest

from generator.entry.schema import PHYSICAL_CLAIMS, SCALAR_CLAIMS
from generator.site.entry_page import NUMBERED_LABELS, subject_label
from tests._shipped_entries import loaded


@pytest.fixture(scope="module")
def kerr():
    return loaded("kerr-boyer-lindquist").entry


@pytest.mark.parametrize("key", [*PHYSICAL_CLAIMS, *SCALAR_CLAIMS, "petrov_type",
                                 "hawking_ellis_type"])
def test_every_single_claim_key_has_a_readers_label(kerr, key):
    label = subject_label(f"claims.{key}", kerr)
    assert not label.startswith("claims.") and "_" not in label


@pytest.mark.parametrize("head", sorted(NUMBERED_LABELS))
def test_numbered_claims_are_counted_from_one(kerr, head):
    assert subject_label(f"{head}.0", kerr) == f"{NUMBERED_LABELS[head]} 1"
    assert subject_label(f"{head}.2", kerr) == f"{NUMBERED_LABELS[head]} 3"


def test_the_surface_gravity_reads_as_the_trade_names_it(kerr):
    assert subject_label("claims.surface_gravity", kerr) == "Surface gravity"
    assert subject_label("claims.isco", kerr) == "Innermost stable circular orbit"


def test_a_key_without_a_label_is_spelled_out_in_words(kerr):
    assert subject_label("claims.something_new", kerr) == "Something new"
