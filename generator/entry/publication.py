"""How a catalog is published and cited: ``publication.yaml`` beside ``families.yaml``.

The site's public address belongs to whoever publishes the catalog, so it is a setting of the
catalog and has no default: without one, citations name the entry, its version and content
hash (and the repository, if one is given) but no address, rather than an address that may
belong to somebody else. The version comes from the settings file, else from the
``pyproject.toml`` beside the catalog folder, else from the generator.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from generator.entry.catalog import _read_mapping
from generator.entry.yamlcheck import MAX_FILE_BYTES
from generator.errors import UsageError
from generator.model import Publication

PUBLICATION_FILE = "publication.yaml"
TEXT_KEYS = ("title", "authors", "version")
ADDRESS_KEYS = ("site_address", "repository")
# An address goes verbatim into BibTeX, CSL-JSON and HTML attributes: a plain http(s) URL only.
ADDRESS = re.compile(r"^https?://[A-Za-z0-9.-]+(:\d{1,5})?(/[A-Za-z0-9._~!$&'()*+,;=:@%/-]*)?$")
HOW_TO_SET = (f"set site_address in catalog/{PUBLICATION_FILE} (the public address of the built "
              "site) to give citations a permanent address")


def read_publication(catalog: Path) -> Publication:
    """The catalog's publication settings; defaults where the file or a key is absent."""
    path = catalog / PUBLICATION_FILE
    data = _read_mapping(path)
    unknown = sorted(str(k) for k in data if k not in TEXT_KEYS + ADDRESS_KEYS)
    if unknown:
        raise UsageError(f"{path}: unknown key {unknown[0]!r}; "
                         f"expected {', '.join(TEXT_KEYS + ADDRESS_KEYS)}")
    values = {key: _text(path, key, data[key]) for key in TEXT_KEYS if key in data}
    for key in ADDRESS_KEYS:
        if key in data:
            values[key] = _address(path, key, data[key])
    return Publication(**values)


def catalog_version(catalog: Path, publication: Publication, fallback: str) -> str:
    """The version citations name: the settings file's, else ``[project].version`` of the
    ``pyproject.toml`` beside the catalog folder, else ``fallback`` (the generator's)."""
    if publication.version:
        return publication.version
    pyproject = catalog.resolve().parent / "pyproject.toml"
    if pyproject.is_file() and pyproject.stat().st_size <= MAX_FILE_BYTES:
        try:
            version = tomllib.loads(pyproject.read_text(encoding="utf-8")).get(
                "project", {}).get("version")
        except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
            raise UsageError(f"{pyproject}: not readable TOML ({exc})") from exc
        if isinstance(version, str) and version:
            return version
    return fallback


def _text(path: Path, key: str, value: object) -> str:
    if not isinstance(value, str) or not value.strip() or len(value) > 200 or \
            any(ord(ch) < 32 for ch in value):
        raise UsageError(f"{path}: {key} must be one line of text (at most 200 characters)")
    return value.strip()


def _address(path: Path, key: str, value: object) -> str:
    if not isinstance(value, str) or len(value) > 300 or not ADDRESS.match(value):
        raise UsageError(f"{path}: {key} must be a plain http(s) address such as "
                         "https://example.org/almanac/")
    return value
